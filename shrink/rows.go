package shrink

import (
	"math"
	"runtime"
	"sync"
)

// The passes over the upper triangle of an N×N estimate (scaling, ‖S‖²_F,
// blending with a target) are bound by memory bandwidth, which one core
// does not fill. They are cut into blocks of rows holding equal shares of
// the triangle; the number and bounds of the blocks depend on N alone and
// any sum is taken block by block in order, so results are bit-identical
// for any GOMAXPROCS.

// triBlocks returns the row bounds b_0 = 0 < … < b_m = n of the blocks:
// one block below 256 rows, else eight.
func triBlocks(n int) []int {
	m := 1
	if n >= 256 {
		m = 8
	}
	b := make([]int, m+1)
	for i := range b {
		b[i] = n - int(math.Round(float64(n)*math.Sqrt(1-float64(i)/float64(m))))
	}
	b[m] = n
	return b
}

// forTriBlocks calls f(block, lo, hi) for every block of rows of an n×n
// triangle, on up to GOMAXPROCS goroutines.
func forTriBlocks(n int, f func(block, lo, hi int)) {
	b := triBlocks(n)
	m := len(b) - 1
	workers := min(m, runtime.GOMAXPROCS(0))
	if workers <= 1 {
		for i := 0; i < m; i++ {
			f(i, b[i], b[i+1])
		}
		return
	}
	var wg sync.WaitGroup
	next := make(chan int, m)
	for i := 0; i < m; i++ {
		next <- i
	}
	close(next)
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				f(i, b[i], b[i+1])
			}
		}()
	}
	wg.Wait()
}
