package riskmodel

// Internals that the external tests (package riskmodel_test, which may import
// internal/demo) check directly.
var FillMeans = fillMeans

// ModelsEqual reports whether two models hold bit-identical numbers.
func ModelsEqual(a, b *Model) bool { return a.equal(b) }
