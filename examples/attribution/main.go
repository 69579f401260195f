// Command attribution is the analyst's report: the ex-ante tracking error of
// a portfolio against its benchmark under a published risk model, explained
// by group (sector, size bucket or any metadata column), by single name, by
// factor and specific risk, with the best single-name hedges and a check
// against the mandate's band.
//
// Usage:
//
//	go run ./examples/attribution [flags]
//	go run ./examples/attribution -model /tmp/riskmodel-store -format html -o report.html
//
// Without -model it builds a factor model from the bundled invented demo
// market (as the nightly job would) and reports on the demo fund against the
// demo benchmark. -model takes the store folder the nightly job's -out wrote
// (meaning its current model) or one dated model folder in it.
//
// Formats: text (aligned tables, the default), csv (one table with a section
// column), json (the schema is in the README: tracking_error and
// periods_per_year at the top, groups[] with group and contribution, …) and
// html (one self-contained page with an SVG bar chart). Every risk figure is
// annualised with the model's periods per year.
//
// Exit status: 0 report written; 2 bad input (flags or files), with a
// one-line reason on stderr; 1 any other failure.
package main

import "os"

func main() { os.Exit(run(os.Args[1:], os.Stdout, os.Stderr)) }
