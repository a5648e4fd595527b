//go:build unix

package load

import "syscall"

// openNonblock keeps an open of a pipe that has no writer from waiting
// for one; reads of regular files are not affected.
const openNonblock = syscall.O_NONBLOCK
