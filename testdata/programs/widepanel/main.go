// Command widepanel writes a large invented market for the nightly job's
// speed measurement (testdata/programs/nightly_dense.sh): the demo
// simulator's panel (internal/demo, stationary, so every cell is observed and
// no asset is dropped) as a wide returns CSV, and its asset metadata.
//
//	go run ./testdata/programs/widepanel -assets 6000 -dates 1000 -out /tmp/panel
//
// writes /tmp/panel/returns_wide.csv and /tmp/panel/assets.csv.
package main

import (
	"flag"
	"log"
	"os"
	"path/filepath"

	"github.com/riskmodel/riskmodel"
	"github.com/riskmodel/riskmodel/internal/demo"
)

func main() {
	n := flag.Int("assets", 6000, "number of assets")
	t := flag.Int("dates", 1000, "number of dates")
	seed := flag.Uint64("seed", 1, "seed of the simulator")
	out := flag.String("out", "", "folder to write into (created)")
	flag.Parse()
	if *out == "" {
		log.Fatal("widepanel: -out is required")
	}
	d, err := demo.Generate(&demo.Config{Seed: *seed, Assets: *n, Dates: *t, Stationary: true})
	if err != nil {
		log.Fatal(err)
	}
	if err := os.MkdirAll(*out, 0o755); err != nil {
		log.Fatal(err)
	}
	if err := riskmodel.WriteReturnsCSVFile(filepath.Join(*out, "returns_wide.csv"), d.Panel, true); err != nil {
		log.Fatal(err)
	}
	if err := riskmodel.WriteAssetsFile(filepath.Join(*out, "assets.csv"), d.Assets); err != nil {
		log.Fatal(err)
	}
	tt, nn := d.Panel.Dims()
	log.Printf("wrote %d dates × %d assets (seed %d) to %s", tt, nn, *seed, *out)
}
