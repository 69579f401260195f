// Package evaluate ranks risk forecasts out of sample. On each rebalance date
// it builds every estimator with riskmodel.Build on the trailing window,
// forms the portfolios an optimizer would form from each forecast
// (unconstrained and long-only minimum variance, a minimum-tracking-error
// portfolio of the largest benchmark names) and random long-only and active
// portfolios, and scores realised against forecast risk over the test period
// that follows. With a truth function (a simulated market's true covariance)
// it also scores Frobenius and minimum-variance losses against the truth and
// adds the oracle as a row.
//
// Run returns a Result, rendered by its WriteText, WriteCSV, WriteJSON and
// WriteSVG methods. The package is the engine of examples/evaluate; it is
// internal because its options and result layout follow that program and are
// not a stable API.
package evaluate
