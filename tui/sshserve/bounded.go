package sshserve

import (
	"fmt"
	"io"
	"os"

	"railyard/switchsim/diag"
)

// Bounds on the server's own files, each read whole (the authorised keys
// again whenever the file changes). Both are far above real files: an
// authorized_keys line is under a kilobyte even for a 4096-bit RSA key, so
// 4 MiB holds thousands of keys; a PEM host key is a few KiB.
const (
	MaxAuthorizedKeysBytes = 4 << 20
	MaxHostKeyBytes        = 64 << 10
)

// readBounded reads the regular file at path, of at most max bytes, and
// returns it with what the open file says of itself (for noticing changes).
// A pipe or device is refused before it is opened, so that nothing waits on
// a writer or reads without end.
func readBounded(path string, max int64) ([]byte, os.FileInfo, error) {
	fi, err := os.Stat(path)
	if err != nil {
		return nil, nil, err
	}
	if err := checkBounded(path, fi, max); err != nil {
		return nil, nil, err
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, err
	}
	defer f.Close()
	if fi, err = f.Stat(); err != nil {
		return nil, nil, err
	}
	if err := checkBounded(path, fi, max); err != nil {
		return nil, nil, err
	}
	// The file may grow between the stat and the read: read one byte past
	// the bound to see it.
	src, err := io.ReadAll(io.LimitReader(f, max+1))
	if err != nil {
		return nil, nil, err
	}
	if int64(len(src)) > max {
		return nil, nil, fmt.Errorf("%s: over the limit of %s", path, diag.SizeString(int(max)))
	}
	return src, fi, nil
}

func checkBounded(path string, fi os.FileInfo, max int64) error {
	if !fi.Mode().IsRegular() {
		return fmt.Errorf("%s: not a regular file", path)
	}
	if fi.Size() > max {
		return fmt.Errorf("%s: %d bytes, over the limit of %s", path, fi.Size(), diag.SizeString(int(max)))
	}
	return nil
}
