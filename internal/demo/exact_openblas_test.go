//go:build openblas

package demo

// bitExact is false under -tags openblas: see TestFilesAreCurrent.
const bitExact = false
