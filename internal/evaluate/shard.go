package evaluate

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/gob"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"time"

	"github.com/riskmodel/riskmodel"
)

// Sharding: RunShard evaluates one slice of the rebalance dates, Merge pools
// the slices of every shard into the Result that Run gives. Each date's
// measures depend only on the panel, the options and the date (every random
// draw is seeded by the date), so the merged Result is bit for bit Run's,
// apart from the timings (FitSeconds, Costs, Elapsed). Shards are independent
// processes: any batch scheduler can run them.

// ErrShard reports shards that do not make up one evaluation: of other
// options or another panel, of another number of shards, repeated or
// missing, or a file that is not a shard.
var ErrShard = errors.New("shards do not make one evaluation")

// shardFormat is the version of the shard file's layout.
const shardFormat = 2

// gatherSpec is what pooling the dates needs of the options and the panel.
type gatherSpec struct {
	Names, Methods      []string // per estimator; the oracle's method is OracleName
	Step, Window        int
	RandomPortfolios    int
	Fund, Truth         bool
	PeriodsPerYear      float64
	Options, Data       string // fingerprints (hex SHA-256) of the resolved options and of the panel
	RebalanceDates      int    // of the whole evaluation
	Shard, Shards       int    // 1 ≤ Shard ≤ Shards
	FirstDate, EndDates int    // the shard's rebalance dates [FirstDate, EndDates)
}

// Shard is the result of RunShard: the measures of one slice of the
// rebalance dates, which Merge pools with the other shards'.
type Shard struct {
	spec  gatherSpec
	dates []*dateResult
}

// Index returns the shard's number i and the number of shards n.
func (s *Shard) Index() (i, n int) { return s.spec.Shard, s.spec.Shards }

// Dates returns the range [first, end) of the shard's rebalance dates, and
// their number in the whole evaluation.
func (s *Shard) Dates() (first, end, total int) {
	return s.spec.FirstDate, s.spec.EndDates, s.spec.RebalanceDates
}

// RunShard evaluates shard i of n (1 ≤ i ≤ n) as Run would, on the
// rebalance dates ⌊(i−1)·Q/n⌋ … ⌊i·Q/n⌋ − 1 of the Q of the panel (a shard
// may have none when n > Q). Options.Progress counts the shard's dates.
// Errors: those of Run, and ErrInput for i or n out of range.
func RunShard(p *riskmodel.Panel, opts *Options, i, n int) (*Shard, error) {
	if n < 1 || i < 1 || i > n {
		return nil, fmt.Errorf("riskmodel: evaluate: %w: shard %d/%d (1 ≤ i ≤ n)", ErrInput, i, n)
	}
	o, err := resolve(p, opts)
	if err != nil {
		return nil, err
	}
	asof, err := rebalanceRows(p, o)
	if err != nil {
		return nil, err
	}
	spec, err := specOf(p, o)
	if err != nil {
		return nil, err
	}
	q := len(asof)
	spec.RebalanceDates, spec.Shard, spec.Shards = q, i, n
	spec.FirstDate, spec.EndDates = (i-1)*q/n, i*q/n
	qs := make([]int, 0, spec.EndDates-spec.FirstDate)
	for k := spec.FirstDate; k < spec.EndDates; k++ {
		qs = append(qs, k)
	}
	ev := &evaluator{p: p, o: o}
	return &Shard{spec: spec, dates: ev.runDates(asof, qs)}, nil
}

// specOf returns the gathering spec of the resolved options on p, with the
// fingerprints.
func specOf(p *riskmodel.Panel, o resolvedOptions) (gatherSpec, error) {
	s := gatherSpec{
		Names: o.names, Step: o.Step, Window: o.Window, RandomPortfolios: o.RandomPortfolios,
		Fund: o.Benchmark != nil && o.Fund != nil, Truth: o.Truth != nil, PeriodsPerYear: p.PeriodsPerYear(),
	}
	for _, m := range o.Methods {
		s.Methods = append(s.Methods, m.Build.Method)
	}
	if o.Truth != nil {
		s.Methods = append(s.Methods, OracleName)
	}
	// Everything that changes a measure; not Workers nor Progress.
	b, err := json.Marshal(struct {
		Methods                         []Estimator
		Step, Window, MinObs            int
		Truth                           bool
		Benchmark, Fund                 []riskmodel.Holding
		RandomPortfolios, TrackingNames int
		Seed                            uint64
		Format                          int
	}{o.Methods, o.Step, o.Window, o.MinObs, o.Truth != nil, o.Benchmark, o.Fund, o.RandomPortfolios, o.TrackingNames, o.Seed, shardFormat})
	if err != nil {
		return s, fmt.Errorf("riskmodel: evaluate: %w: options: %w", ErrInput, err)
	}
	h := sha256.Sum256(b)
	s.Options = hex.EncodeToString(h[:])
	s.Data = panelFingerprint(p)
	return s, nil
}

// panelFingerprint returns the hex SHA-256 of the panel's dates, assets,
// periods per year and returns (their bits).
func panelFingerprint(p *riskmodel.Panel) string {
	h := sha256.New()
	t, n := p.Dims()
	var buf [8]byte
	put := func(v uint64) {
		binary.LittleEndian.PutUint64(buf[:], v)
		h.Write(buf[:])
	}
	put(uint64(t))
	put(uint64(n))
	put(math.Float64bits(p.PeriodsPerYear()))
	for i := 0; i < t; i++ {
		put(uint64(p.Date(i)))
	}
	for j := 0; j < n; j++ {
		a := p.Asset(j)
		put(uint64(len(a)))
		h.Write([]byte(a))
	}
	for i := 0; i < t; i++ {
		for j := 0; j < n; j++ {
			put(math.Float64bits(p.At(i, j)))
		}
	}
	return hex.EncodeToString(h.Sum(nil))
}

// Merge pools shards of one evaluation into its Result: the same, bit for
// bit, as Run's apart from the timings (Elapsed is zero). The shards may
// come in any order. Errors wrap ErrShard: no shard, shards of other
// options, panels or numbers of shards, a shard repeated, or one missing.
func Merge(shards ...*Shard) (*Result, error) {
	if len(shards) == 0 {
		return nil, fmt.Errorf("riskmodel: evaluate: %w: no shard", ErrShard)
	}
	first := shards[0].spec
	got := make([]*Shard, first.Shards)
	for _, sh := range shards {
		s := sh.spec
		switch {
		case s.Options != first.Options:
			return nil, fmt.Errorf("riskmodel: evaluate: %w: shard %d/%d was run with other options than shard %d/%d", ErrShard, s.Shard, s.Shards, first.Shard, first.Shards)
		case s.Data != first.Data:
			return nil, fmt.Errorf("riskmodel: evaluate: %w: shard %d/%d was run on another panel than shard %d/%d", ErrShard, s.Shard, s.Shards, first.Shard, first.Shards)
		case s.Shards != first.Shards || s.RebalanceDates != first.RebalanceDates:
			return nil, fmt.Errorf("riskmodel: evaluate: %w: shard %d/%d does not split the evaluation as shard %d/%d", ErrShard, s.Shard, s.Shards, first.Shard, first.Shards)
		case s.Shard < 1 || s.Shard > s.Shards:
			return nil, fmt.Errorf("riskmodel: evaluate: %w: shard %d/%d", ErrShard, s.Shard, s.Shards)
		case got[s.Shard-1] != nil:
			return nil, fmt.Errorf("riskmodel: evaluate: %w: shard %d/%d given twice", ErrShard, s.Shard, s.Shards)
		case s.FirstDate != (s.Shard-1)*s.RebalanceDates/s.Shards || s.EndDates != s.Shard*s.RebalanceDates/s.Shards || len(sh.dates) != s.EndDates-s.FirstDate:
			return nil, fmt.Errorf("riskmodel: evaluate: %w: shard %d/%d does not hold its dates", ErrShard, s.Shard, s.Shards)
		}
		got[s.Shard-1] = sh
	}
	var res []*dateResult
	for k, sh := range got {
		if sh == nil {
			return nil, fmt.Errorf("riskmodel: evaluate: %w: shard %d/%d is missing", ErrShard, k+1, first.Shards)
		}
		res = append(res, sh.dates...)
	}
	var ok []*dateResult
	var skipped []SkippedDate
	for _, d := range res {
		if d.failure != "" {
			skipped = append(skipped, SkippedDate{AsOf: d.period.AsOf, Error: d.failure})
			continue
		}
		ok = append(ok, d)
	}
	if len(ok) == 0 && len(skipped) > 0 {
		return nil, fmt.Errorf("riskmodel: evaluate: %w: all %d failed, the first on %s: %s", ErrNoDate, len(skipped), skipped[0].AsOf, skipped[0].Error)
	}
	out := gather(first, ok)
	out.Skipped = skipped
	return out, nil
}

// seconds converts seconds to a duration.
func seconds(s float64) time.Duration { return time.Duration(s * float64(time.Second)) }

// The shard file: a gob stream of shardFile. Floats travel as their bits,
// so a round trip is exact (NaN included).

type shardFile struct {
	Magic string
	Spec  gatherSpec
	Dates []wireDate
}

const shardMagic = "riskmodel evaluate shard"

type wireDate struct {
	Period                        Period
	Est                           []wireEst
	RefRet                        []float64
	Universe                      []string
	FitSecs, ScoreSecs, TruthSecs float64
	Failure                       string
}

type wireEst struct {
	Forecast                PeriodForecast
	GMV, Long, Trk          []float64
	GMVZ, LongZ, TrkZ, TrkW []float64
	RandLong, RandActive    [][]float64
	FundZ                   []float64
	Ridged                  bool
	NotConverged            int
	SampleFrob, SampleMV    float64
}

// Write writes the shard to w, for ReadShard.
func (s *Shard) Write(w io.Writer) error {
	f := shardFile{Magic: shardMagic, Spec: s.spec}
	for _, d := range s.dates {
		wd := wireDate{Period: d.period, RefRet: d.refRet, Universe: d.universe, FitSecs: d.fitSecs, ScoreSecs: d.scoreSecs, TruthSecs: d.truthSecs, Failure: d.failure}
		for _, e := range d.est {
			wd.Est = append(wd.Est, wireEst{
				Forecast: e.forecast, GMV: e.gmv, Long: e.long, Trk: e.trk, GMVZ: e.gmvZ, LongZ: e.longZ, TrkZ: e.trkZ, TrkW: e.trkW,
				RandLong: e.randLong, RandActive: e.randActive, FundZ: e.fundZ, Ridged: e.ridged, NotConverged: e.notConverged,
				SampleFrob: e.sampleFrob, SampleMV: e.sampleMV,
			})
		}
		f.Dates = append(f.Dates, wd)
	}
	return gob.NewEncoder(w).Encode(&f)
}

// ReadShard reads a shard that Shard.Write wrote. Errors wrap ErrShard for
// anything else.
func ReadShard(r io.Reader) (*Shard, error) {
	var f shardFile
	if err := gob.NewDecoder(r).Decode(&f); err != nil {
		return nil, fmt.Errorf("riskmodel: evaluate: %w: not a shard file: %w", ErrShard, err)
	}
	if f.Magic != shardMagic {
		return nil, fmt.Errorf("riskmodel: evaluate: %w: not a shard file", ErrShard)
	}
	sh := &Shard{spec: f.Spec}
	nest := len(f.Spec.Names)
	for _, wd := range f.Dates {
		if wd.Failure != "" {
			sh.dates = append(sh.dates, &dateResult{period: wd.Period, failure: wd.Failure})
			continue
		}
		if len(wd.Est) != nest || len(wd.Period.Forecasts) != nest {
			return nil, fmt.Errorf("riskmodel: evaluate: %w: a date of shard %d/%d has %d estimators, not %d", ErrShard, f.Spec.Shard, f.Spec.Shards, len(wd.Est), nest)
		}
		d := &dateResult{period: wd.Period, refRet: wd.RefRet, universe: wd.Universe, fitSecs: wd.FitSecs, scoreSecs: wd.ScoreSecs, truthSecs: wd.TruthSecs}
		for _, e := range wd.Est {
			if len(e.RandLong) != f.Spec.RandomPortfolios || len(e.RandActive) != f.Spec.RandomPortfolios || len(e.TrkW) != len(wd.Universe) {
				return nil, fmt.Errorf("riskmodel: evaluate: %w: a date of shard %d/%d is incomplete", ErrShard, f.Spec.Shard, f.Spec.Shards)
			}
			d.est = append(d.est, estimatorDate{
				forecast: e.Forecast, gmv: e.GMV, long: e.Long, trk: e.Trk, gmvZ: e.GMVZ, longZ: e.LongZ, trkZ: e.TrkZ, trkW: e.TrkW,
				randLong: e.RandLong, randActive: e.RandActive, fundZ: e.FundZ, ridged: e.Ridged, notConverged: e.NotConverged,
				sampleFrob: e.SampleFrob, sampleMV: e.SampleMV,
			})
		}
		sh.dates = append(sh.dates, d)
	}
	return sh, nil
}
