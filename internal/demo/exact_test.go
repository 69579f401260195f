//go:build !openblas

package demo

// bitExact: the default build is the one that writes the committed demo
// files, so it must reproduce them bit for bit.
const bitExact = true
