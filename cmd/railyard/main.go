// Command railyard simulates pass-transistor and transmission-gate cells at switch level.
package main

import (
	"fmt"
	"os"
)

func main() {
	fmt.Fprintln(os.Stderr, "railyard: the explorer is not built yet")
}
