package evaluate

import (
	"github.com/riskmodel/riskmodel"
)

// Bounds on the sizes an evaluation accepts. Past them a run would only
// spend memory and time without changing a ranking.
const (
	MaxRandomPortfolios = 10000 // random portfolios of each kind on each date
	MaxTrackingNames    = 10000
	MaxWorkers          = 256
)

// Memory estimates, in bytes, the peak memory Run (or RunShard of one shard
// of n) needs beyond the panel it is given, for a check before it starts.
// Per worker (Options.Workers dates at once, at most the shard's dates): the
// N×N forecast of every dense estimator of a date (8·N² bytes each, N the
// panel's assets), the largest fit's own working memory
// (riskmodel.BuildMemory on the window), the scoring's working copies of
// one forecast (the full matrix, its Cholesky factor, a ridged copy and its
// factor, the inverse and its square for the minimum-variance loss: about
// 6 × 8·N²) and, with a truth, the truth of all assets, the mean truth of
// the test period, its Cholesky factor, L and L⁻ᵀ (5 × 8·N²); and for every date of the shard the measures
// kept for the ranking (per estimator, 2·RandomPortfolios + 7 series of Step
// values and N weights). The figure errs on the high side; it is an
// estimate, not a bound. Errors: those of resolving the options (ErrInput).
func Memory(p *riskmodel.Panel, opts *Options, n int) (int64, error) {
	o, err := resolve(p, opts)
	if err != nil {
		return 0, err
	}
	asof, err := rebalanceRows(p, o)
	if err != nil {
		return 0, err
	}
	if n < 1 {
		n = 1
	}
	dates := (len(asof) + n - 1) / n
	_, assets := p.Dims()
	nn := 8 * int64(assets) * int64(assets)
	var held, fit int64
	for _, m := range o.Methods {
		if !riskmodel.FactorForm(m.Build.Method) {
			held += nn
		}
		fit = max(fit, riskmodel.BuildMemory(m.Build.Method, o.Window, assets))
	}
	work := 6 * nn
	if o.Truth != nil {
		held += nn // the oracle
		work += 5 * nn
	}
	workers := int64(min(o.Workers, max(dates, 1)))
	perDate := int64(len(o.names)) * 8 * (int64(2*o.RandomPortfolios+7)*int64(o.Step) + int64(assets))
	return workers*(held+fit+work) + int64(dates)*perDate, nil
}
