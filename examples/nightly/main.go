// Command nightly is the project's rebuild job: it reads a return history and
// asset metadata, checks their quality, builds a risk model, validates it,
// compares it with the model published the night before and publishes it
// atomically to a model store. Without flags it runs on the bundled invented
// demo market and publishes to the store riskmodel/store in the user's cache
// folder (os.UserCacheDir; a private TMPDIR/riskmodel-UID without one), so a
// fresh clone needs no set-up and nothing is written into the repository.
//
// Usage:
//
//	go run ./examples/nightly [flags]
//	go run ./examples/nightly -h      # every flag with its default
//
// The steps, each logged through log/slog on stderr (text or JSON):
//
//  0. check that -out and -dense can be written, before any work;
//  1. read the returns (Parquet or CSV), the asset metadata and, when given,
//     the test portfolio and its benchmark (holdings files); infer the
//     frequency from the dates and refuse a -periods-per-year they contradict;
//  2. refuse an -asof past the data, a thin last date (stray or stale rows)
//     and a window of fewer than -min-dates dates; the data-quality report
//     of the window, printed on stdout; refuse returns that look like prices
//     or percent returns (-accept-implausible overrides);
//  3. build the model (-method, by default the statistical factor model),
//     with the store's current model as the previous one, so that factors keep
//     their order and sign;
//  4. validate it: finite, positive definite, condition number, coverage of
//     the benchmark's weight, and the bias statistic of the test portfolio's
//     forecast over the trailing -bias-window dates;
//  5. compare it with the current model: principal angles between the factor
//     spaces, the largest changes in specific risk (total risk when one of
//     the two is dense), the change in the test portfolio's tracking error;
//  6. optionally write the dense N×N covariance as CSV (-dense);
//  7. publish under the store's lock (a second job waits -lock-timeout): a
//     new dated folder, read back and checked, then made current by an
//     atomic rename unless it is older than the current model (a backfill;
//     -set-current overrides); a failure or a kill at any point leaves the
//     previous current model as it was; -keep N removes old dated folders.
//
// Exit status: 0 published; 2 bad input (flags or files), nothing published;
// 1 any other failure (a model that fails validation, a disk error), nothing
// published. The last log line says why. A progress bar is drawn on stderr
// only when stderr is a terminal.
package main

import "os"

func main() { os.Exit(run(os.Args[1:], os.Stdout, os.Stderr)) }
