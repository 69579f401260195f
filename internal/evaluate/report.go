package evaluate

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/riskmodel/riskmodel"
)

// The ranking table of an Result as text, CSV and JSON. All three carry
// the same columns: volatilities and tracking errors annualized in %, the
// bias figures as plain numbers, shares in %, fit times in seconds.

// evaluateColumns are the CSV header and the JSON keys, in order.
var evaluateColumns = []string{
	"rank", "estimator", "method", "mean_rank",
	"minvar_realised_pct", "minvar_lower_pct", "minvar_upper_pct", "minvar_forecast_pct", "minvar_bias",
	"longonly_realised_pct", "longonly_lower_pct", "longonly_upper_pct", "longonly_forecast_pct", "longonly_bias",
	"tracking_realised_pct", "tracking_lower_pct", "tracking_upper_pct", "tracking_forecast_pct", "tracking_bias",
	"random_longonly_mean_bias", "random_longonly_inside_pct", "random_longonly_inside_lower_pct", "random_longonly_inside_upper_pct",
	"random_active_mean_bias", "random_active_inside_pct", "random_active_inside_lower_pct", "random_active_inside_upper_pct",
	"fund_bias", "fund_inside",
	"frobenius_loss", "frobenius_prial_pct", "mv_loss", "mv_prial_pct",
	"fit_seconds", "ridged_dates", "not_converged",
	"minvar_ratio", "tracking_ratio", "tracking_turnover_pct",
}

// row returns the score's values in the order of evaluateColumns: a string,
// an int, a bool or a float64 (NaN for a value that does not apply).
func (s *Score) row() []any {
	pct := func(v float64) float64 { return 100 * v }
	fundBias, fundInside := math.NaN(), any(nil)
	if s.Fund != nil {
		fundBias, fundInside = s.Fund.Value, s.Fund.Inside
	}
	port := func(p PortfolioScore) []any {
		return []any{pct(p.Realised.Value), pct(p.Realised.Lower), pct(p.Realised.Upper), pct(p.Forecast), p.Bias.Value}
	}
	bias := func(b BiasScore) []any {
		return []any{b.MeanBias, pct(b.Inside.Value), pct(b.Inside.Lower), pct(b.Inside.Upper)}
	}
	r := []any{s.Rank, s.Name, s.Method, s.MeanRank}
	r = append(r, port(s.MinVariance)...)
	r = append(r, port(s.LongOnly)...)
	r = append(r, port(s.Tracking)...)
	r = append(r, bias(s.RandomLongOnly)...)
	r = append(r, bias(s.RandomActive)...)
	r = append(r, fundBias, fundInside, s.FrobeniusLoss, s.FrobeniusPRIAL, s.MVLoss, s.MVPRIAL, s.FitSeconds, s.Ridged, s.NotConverged)
	r = append(r, s.MinVariance.Realised.Value/s.MinVariance.Forecast, s.Tracking.Realised.Value/s.Tracking.Forecast, pct(s.TrackingTurnover))
	return r
}

// WriteCSV writes one row per estimator, best first, under a header line; an
// empty cell is a value that does not apply (no truth, no fund, a singular
// forecast).
func (ev *Result) WriteCSV(w io.Writer) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(evaluateColumns); err != nil {
		return err
	}
	for i := range ev.Scores {
		vals := ev.Scores[i].row()
		rec := make([]string, len(vals))
		for k, v := range vals {
			switch x := v.(type) {
			case float64:
				if !math.IsNaN(x) && !math.IsInf(x, 0) {
					rec[k] = strconv.FormatFloat(x, 'g', 8, 64)
				}
			case nil:
			default:
				rec[k] = fmt.Sprint(x)
			}
		}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// evaluationJSON is the JSON form of an Result.
type evaluationJSON struct {
	Step           int              `json:"step"`
	Window         int              `json:"window"`
	RebalanceDates int              `json:"rebalance_dates"`
	TestDates      int              `json:"test_dates"`
	First          string           `json:"first_rebalance"`
	Last           string           `json:"last_test_date"`
	Metrics        []string         `json:"ranked_metrics"`
	Recommendation string           `json:"recommendation"`
	Estimators     []map[string]any `json:"estimators"`
	Caution        string           `json:"caution"`
	// The rebalance dates left out (Result.Skipped).
	Skipped []skippedJSON `json:"skipped_dates"`
	// The costs (Result.Costs) in seconds, summed over the dates.
	Costs struct {
		Fits    float64 `json:"fits"`
		Scoring float64 `json:"scoring"`
		Truth   float64 `json:"truth_losses"`
	} `json:"cost_seconds"`
}

type skippedJSON struct {
	AsOf  string `json:"as_of"`
	Error string `json:"error"`
}

// WriteJSON writes the evaluation's settings, recommendation and one object
// per estimator, best first, with the keys of the CSV header; a value that
// does not apply is null.
func (ev *Result) WriteJSON(w io.Writer) error {
	out := evaluationJSON{
		Step: ev.Step, Window: ev.Window, RebalanceDates: len(ev.Periods), TestDates: ev.TestDates,
		Metrics: ev.Metrics, Recommendation: ev.Recommendation, Caution: riskmodel.Caution,
	}
	out.Costs.Fits, out.Costs.Scoring, out.Costs.Truth = ev.Costs.Fits.Seconds(), ev.Costs.Scoring.Seconds(), ev.Costs.Truth.Seconds()
	out.Skipped = []skippedJSON{}
	for _, d := range ev.Skipped {
		out.Skipped = append(out.Skipped, skippedJSON{AsOf: d.AsOf.String(), Error: d.Error})
	}
	if len(ev.Periods) > 0 {
		out.First = ev.Periods[0].AsOf.String()
		out.Last = ev.Periods[len(ev.Periods)-1].Last.String()
	}
	for i := range ev.Scores {
		obj := map[string]any{}
		for k, v := range ev.Scores[i].row() {
			if x, ok := v.(float64); ok && (math.IsNaN(x) || math.IsInf(x, 0)) {
				v = nil
			}
			obj[evaluateColumns[k]] = v
		}
		out.Estimators = append(out.Estimators, obj)
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(out)
}

// WriteText writes the ranking as an aligned table, with a legend and the
// recommendation, for a terminal.
func (ev *Result) WriteText(w io.Writer) error {
	var b strings.Builder
	if len(ev.Periods) > 0 {
		fmt.Fprintf(&b, "Out-of-sample evaluation: %d rebalance dates from %s, every %d dates, window %d, %d test dates to %s.\n",
			len(ev.Periods), ev.Periods[0].AsOf, ev.Step, ev.Window, ev.TestDates, ev.Periods[len(ev.Periods)-1].Last)
	}
	truth := false
	for _, s := range ev.Scores {
		if !math.IsNaN(s.FrobeniusLoss) {
			truth = true
		}
	}
	head := []string{"rank", "estimator", "mean rank", "minvar vol %", "95 % interval", "fcst %", "long-only %", "track TE %", "fcst %",
		"long bias", "in band %", "active bias", "in band %", "mv r/f", "trk r/f", "turn %"}
	if truth {
		head = append(head, "PRIAL frob %", "PRIAL mv %")
	}
	head = append(head, "fit s")
	rows := [][]string{head}
	f := func(format string, v float64) string {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return "-"
		}
		return fmt.Sprintf(format, v)
	}
	for _, s := range ev.Scores {
		r := []string{
			strconv.Itoa(s.Rank), s.Name, f("%.2f", s.MeanRank),
			f("%.2f", 100*s.MinVariance.Realised.Value),
			f("%.2f", 100*s.MinVariance.Realised.Lower) + "–" + f("%.2f", 100*s.MinVariance.Realised.Upper),
			f("%.2f", 100*s.MinVariance.Forecast),
			f("%.2f", 100*s.LongOnly.Realised.Value),
			f("%.2f", 100*s.Tracking.Realised.Value), f("%.2f", 100*s.Tracking.Forecast),
			f("%.3f", s.RandomLongOnly.MeanBias), f("%.0f", 100*s.RandomLongOnly.Inside.Value),
			f("%.3f", s.RandomActive.MeanBias), f("%.0f", 100*s.RandomActive.Inside.Value),
			f("%.2f", s.MinVariance.Realised.Value/s.MinVariance.Forecast),
			f("%.2f", s.Tracking.Realised.Value/s.Tracking.Forecast),
			f("%.1f", 100*s.TrackingTurnover),
		}
		if truth {
			r = append(r, f("%.1f", s.FrobeniusPRIAL), f("%.1f", s.MVPRIAL))
		}
		r = append(r, f("%.3f", s.FitSeconds))
		rows = append(rows, r)
	}
	width := make([]int, len(head))
	for _, r := range rows {
		for k, c := range r {
			width[k] = max(width[k], len([]rune(c)))
		}
	}
	for _, r := range rows {
		for k, c := range r {
			pad := strings.Repeat(" ", width[k]-len([]rune(c)))
			if k == 1 {
				b.WriteString(c + pad)
			} else {
				b.WriteString(pad + c)
			}
			if k < len(r)-1 {
				b.WriteString("  ")
			}
		}
		b.WriteString("\n")
	}
	fmt.Fprintf(&b, "Ranked on %s (lower is better; mean of the ranks).\n", strings.Join(ev.Metrics, ", "))
	b.WriteString("Bias: standard deviation of returns over their forecast volatility, 1 is right; in band: share of tests inside 1 ± √(2/T).\n")
	b.WriteString("r/f: realised over forecast volatility of the minimum-variance and tracking portfolios, 1 is right; turn: one-way turnover of the tracking portfolio per rebalance.\n")
	for _, s := range ev.Scores {
		if s.Fund != nil {
			fmt.Fprintf(&b, "Fund's active risk, bias statistic by estimator:")
			for _, s := range ev.Scores {
				fmt.Fprintf(&b, " %s %.3f", s.Name, s.Fund.Value)
			}
			fmt.Fprintf(&b, " (band %.3f–%.3f).\n", s.Fund.Lower, s.Fund.Upper)
			break
		}
	}
	b.WriteString(ev.Recommendation + "\n")
	if len(ev.Skipped) > 0 {
		fmt.Fprintf(&b, "Skipped %d of %d rebalance dates, on which an estimator failed (every score is over the others):\n",
			len(ev.Skipped), len(ev.Skipped)+len(ev.Periods))
		for _, d := range ev.Skipped {
			fmt.Fprintf(&b, "  %s: %s\n", d.AsOf, d.Error)
		}
	}
	b.WriteString("Caution: " + riskmodel.Caution + "\n")
	_, err := io.WriteString(w, b.String())
	return err
}
