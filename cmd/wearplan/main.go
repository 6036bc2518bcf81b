// Command wearplan turns infrastructure condition data into a funded
// multi-year maintenance work program. See README.md.
package main

import (
	"os"

	"wearplan/cmd/internal/cli"
)

func main() {
	os.Exit(cli.Main(os.Args[1:], os.Stdout, os.Stderr))
}
