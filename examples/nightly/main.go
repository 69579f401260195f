// Command nightly is the project's main job. This first version loads a
// return history and asset metadata (by default the bundled invented demo
// market), validates them and prints a data-quality summary.
//
// Usage:
//
//	go run ./examples/nightly [-returns FILE] [-assets FILE] [-asof YYYY-MM-DD] [-window N] [-min-obs N]
//
// It exits with status 2 and a one-line reason on bad input.
package main

import "os"

func main() { os.Exit(run(os.Args[1:], os.Stdout, os.Stderr)) }
