// Command attribution is the analyst's report: the ex-ante tracking error of
// a portfolio against its benchmark under a published risk model, explained
// by one or more groupings (sector, size bucket or any metadata column) and
// the cross table of the first two, by single name, by factor (statistical
// factors labelled by what they resemble) and specific risk, with the best
// single-name hedges a long-only fund can trade and a check against the
// mandate's band.
//
// Usage:
//
//	go run ./examples/attribution [flags]
//	go run ./examples/attribution -model ~/.cache/riskmodel/store -group sector,size_bucket -format html -o report.html
//
// Without -model it builds a factor model from the bundled invented demo
// market (as the nightly job would) and reports on the demo fund against the
// demo benchmark. -model takes the store folder the nightly job's -out wrote
// (meaning its current model) or one dated model folder in it.
//
// Formats: text (aligned tables, the default), csv (one table with a section
// column), json (the schema is in the README: the header, tracking_error,
// groupings[] with their groups, cross, …) and html (one self-contained page
// with an SVG bar chart split into factor and specific parts and a print
// style sheet). Every format starts with the header (portfolio, benchmark,
// model, units) and ends with the caution. Every risk figure is annualised
// with the model's periods per year. -o writes a temporary file and renames
// it into place; it refuses the path of an input.
//
// Weights are fractions of capital: a side summing to about 100, a weight
// beyond ±10 and a band limit of 1 or more are refused as bad input; a side
// summing away from 1 is a warning on stderr and in the report (an error
// with -long-only).
//
// Exit status: 0 report written; 2 bad input (flags or files), with a
// one-line reason on stderr; 1 any other failure.
package main

import "os"

func main() { os.Exit(run(os.Args[1:], os.Stdout, os.Stderr)) }
