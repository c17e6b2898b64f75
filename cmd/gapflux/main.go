// Command gapflux turns scans of a cookware base into its form, how it rests
// on a hob, and what its warp costs in heat. Run "gapflux help" for commands.
package main

import (
	"fmt"
	"os"
)

func main() {
	fmt.Fprintln(os.Stderr, "gapflux: under construction")
	os.Exit(2)
}
