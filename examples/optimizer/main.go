// Command optimizer shows how an in-house optimizer consumes a published risk
// model: it loads the model, aligns its assets with a universe (the
// benchmark's names), runs a small long-only minimum-tracking-error
// rebalancer that uses Σx in factor form, checks the result against a
// tracking-error band and exports the square-root form of the covariance for
// an external second-order-cone solver.
//
// It is an example of use, not a product optimizer: one objective (tracking
// error), one kind of constraint (fully invested, long only, a maximum
// weight, an optional shortlist of names), plain projected gradient with a
// fixed step, no transaction costs, turnover or risk-aversion settings.
//
// Usage:
//
//	go run ./examples/optimizer [flags]
//	go run ./examples/optimizer -model ~/.cache/riskmodel/store -max-weight 0.02 -names 150 -band 0,0.01
//
// Without -model it builds a factor model from the bundled invented demo
// market and starts from the demo fund, with the demo benchmark as universe.
//
// The rebalancer minimises f(w) = (w − b)ᵀ Σ (w − b) over
// {w : Σ_i w_i = 1, 0 ≤ w_i ≤ u_i} (u_i the maximum weight on the
// shortlisted names, 0 elsewhere) by projected gradient,
//
//	w ← P(w − (1/L) · 2Σ(w − b)),   L = 2 λ_max(QΣQ),   Q = I − 11ᵀ/N,
//
// which decreases f at every step (Beck & Teboulle 2009, with the fixed step
// 1/L). Q projects onto the directions of the plane Σ_i w_i = 1 (those with
// Σ_i d_i = 0), the only ones a step moves in, so L leaves out the market
// direction, which lies close to the equal-weighted portfolio: a step
// several times longer than 1/(2λ_max(Σ)). Σx costs O(N·K) in factor form.
// P is the Euclidean projection onto the capped simplex:
// w_i = min(u_i, max(0, v_i − τ)) with τ chosen so that the weights sum to 1
// (found by bisection, then solved exactly on the final linear piece).
//
// Exported, to -export (CSV, per-period units):
//
//	sqrt_factor.csv    the K×N block g = Lᵀ·Bᵀ of G (F = L·Lᵀ), header factor,<asset>…
//	sqrt_specific.csv  asset,specific_volatility: s_i = √d_i
//	problem.csv        asset,benchmark,start,optimized,max_weight
//
// so that ‖g·x‖² + Σ_i (s_i·x_i)² = xᵀΣx and the cone solver's problem is
// min ‖(g·(w − b), s∘(w − b))‖₂ under its own constraints. A dense model has
// no factor form; it is exported instead as
//
//	cholesky_factor.csv  the N×N upper-triangular Lᵀ of Σ = L·Lᵀ, header row,<asset>…, rows r1..rN
//
// (‖Lᵀx‖² = xᵀΣx; no sqrt_specific.csv).
//
// It prints the fund's own tracking error (the holdings as given, over the
// whole model), the start's once projected onto the constraints (the
// benchmark's names, the caps, fully invested), the optimised one, the band
// check against -band (default 0 to 2 %) and the caution.
//
// Exit status: 0 done; 2 bad input (flags or files) with a one-line reason;
// 1 any other failure.
//
// References:
//
// Beck, A. & Teboulle, M. (2009). A fast iterative shrinkage-thresholding
// algorithm for linear inverse problems. SIAM J. Imaging Sciences 2(1),
// 183–202 (the descent property of the projected gradient step 1/L).
//
// Wang, W. & Carreira-Perpiñán, M. Á. (2013). Projection onto the probability
// simplex: an efficient algorithm with a simple proof, and an application.
// arXiv:1309.1541.
package main

import "os"

func main() { os.Exit(run(os.Args[1:], os.Stdout, os.Stderr)) }
