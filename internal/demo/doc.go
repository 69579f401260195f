// Package demo simulates the project's invented equity market: 500 invented
// stocks (QV0001, …) in an invented sector scheme (Orchards, Foundries, …),
// a market, sector and style factor structure with volatility clustering,
// Student-t specific returns, listings, delistings, halts, a stress episode
// and planted data faults, plus a cap-weighted benchmark and an enhanced-index
// fund. Because the market is simulated, its true conditional covariance is
// known on every date (Market.TrueCovarianceTo), which makes it the oracle of
// the simulation tests and of the out-of-sample evaluation.
//
// Generate(nil) is the bundled demo under testdata/demo, rewritten by
// `go run ./testdata/gendemo`; other seeds and shapes give other markets for
// tests.
//
// The package hands out the root package's own types (riskmodel.Panel,
// riskmodel.AssetInfo, riskmodel.Holding) rather than plain matrices: the
// demo exists to feed the pipeline exactly the inputs a user's files would
// give, and Market.WriteFiles writes them with the same writers a user calls,
// so a round trip through the files is part of what the demo checks. The
// arrow therefore points from demo to the root package; tests of the root
// package that draw a demo market are external tests (package riskmodel_test).
//
// It is internal: the demo is a fixture of this module, not an API.
package demo
