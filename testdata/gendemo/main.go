// Command gendemo writes the bundled demo market, demo.Generate(nil), into
// testdata/demo. Run it from the repository root:
//
//	go run ./testdata/gendemo
//
// The test TestDemoFilesAreCurrent fails until the committed files match a
// fresh generation, so rerun this after any change to the generator or to
// the file writers. See testdata/README.md for what each file holds.
package main

import (
	"flag"
	"log"
	"os"

	"github.com/riskmodel/riskmodel/internal/demo"
)

func main() {
	out := flag.String("out", "testdata/demo", "folder to write the demo files into")
	flag.Parse()
	d, err := demo.Generate(nil)
	if err != nil {
		log.Fatal(err)
	}
	if err := os.MkdirAll(*out, 0o755); err != nil {
		log.Fatal(err)
	}
	if err := d.WriteFiles(*out); err != nil {
		log.Fatal(err)
	}
	t, n := d.Panel.Dims()
	log.Printf("wrote %d dates × %d assets (seed %d) to %s", t, n, d.Config.Seed, *out)
}
