// Command hoplore runs packet-level routing experiments: see README.md.
package main

import (
	"os"
)

func main() {
	os.Exit(run(os.Args[1:], defaultDeps()))
}
