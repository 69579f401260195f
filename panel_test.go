package riskmodel

import (
	"math"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// missing marks a missing return in the test panels.
var missing = math.NaN()

func TestDates(t *testing.T) {
	d := DateOf(2030, time.January, 7)
	require.Equal(t, "2030-01-07", d.String())
	require.Equal(t, time.Monday, d.Weekday()) // 7 January 2030 is a Monday (calendar)
	require.Equal(t, Date(0), DateOf(1970, time.January, 1))
	require.Equal(t, DateOf(2030, time.February, 1), DateOf(2030, time.January, 32))
	require.Equal(t, DateOf(1969, time.December, 31), Date(-1))

	got, err := ParseDate("2032-02-29")
	require.NoError(t, err)
	require.Equal(t, DateOf(2032, time.February, 29), got)
	_, err = ParseDate("2031-02-29")
	require.ErrorContains(t, err, `"2031-02-29" is not of the form YYYY-MM-DD`)

	// A local midnight east of UTC is the same calendar date, not the day
	// before as a conversion to UTC would give.
	tokyo := time.FixedZone("UTC+9", 9*3600)
	require.Equal(t, d, DateFromTime(time.Date(2030, time.January, 7, 0, 0, 0, 0, tokyo)))
	require.Equal(t, d.AddDays(1), DateOf(2030, time.January, 8))
}

func testPanel(t *testing.T) *Panel {
	t.Helper()
	dates := []Date{DateOf(2030, 1, 7), DateOf(2030, 1, 8), DateOf(2030, 1, 9), DateOf(2030, 1, 10), DateOf(2030, 1, 11)}
	x := mat.NewDense(5, 3, []float64{
		missing, 0.01, 0.02,
		0.03, missing, 0.01,
		missing, missing, -0.02,
		0.01, missing, 0.00,
		0.02, 0.05, missing,
	})
	p, err := NewPanel(dates, []string{"A", "B", "C"}, x, 0)
	require.NoError(t, err)
	return p
}

func TestNewPanel(t *testing.T) {
	p := testPanel(t)
	tt, n := p.Dims()
	require.Equal(t, 5, tt)
	require.Equal(t, 3, n)
	require.Equal(t, float64(DailyPeriods), p.PeriodsPerYear())
	j, ok := p.Column("B")
	require.True(t, ok)
	require.Equal(t, 1, j)
	_, ok = p.Column("Z")
	require.False(t, ok)

	// The panel copies its inputs and hands out copies.
	dates := p.Dates()
	dates[0] = 0
	require.Equal(t, DateOf(2030, 1, 7), p.Date(0))
	x := p.ReturnsTo(nil)
	x.Set(1, 0, 9)
	require.Equal(t, 0.03, p.At(1, 0))

	d := []Date{1, 2}
	for _, tc := range []struct {
		name   string
		dates  []Date
		assets []string
		x      []float64
		ppy    float64
		want   error
		msg    string
	}{
		{"unsorted dates", []Date{2, 1}, []string{"A"}, []float64{0, 0}, 0, ErrUnsorted, "1970-01-02 follows 1970-01-03"},
		{"repeated date", []Date{2, 2}, []string{"A"}, []float64{0, 0}, 0, ErrUnsorted, ""},
		{"duplicate asset", d, []string{"A", "A"}, []float64{0, 0, 0, 0}, 0, ErrDuplicate, `asset "A" in columns 0 and 1`},
		{"infinite return", d, []string{"A"}, []float64{0, math.Inf(1)}, 0, ErrNonFinite, "return of A on 1970-01-03"},
		{"impossible return", d, []string{"A"}, []float64{-1, 0}, 0, ErrImpossible, "return of A on 1970-01-02"},
		{"periods per year", d, []string{"A"}, []float64{0, 0}, -12, ErrPeriodsPerYear, "-12"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := NewPanel(tc.dates, tc.assets, mat.NewDense(len(tc.dates), len(tc.assets), tc.x), tc.ppy)
			require.ErrorIs(t, err, tc.want)
			require.ErrorContains(t, err, tc.msg)
		})
	}
	_, err := NewPanel(d, []string{""}, mat.NewDense(2, 1, nil), 0)
	require.ErrorContains(t, err, "empty identifier")
	require.PanicsWithValue(t, mat.ErrShape, func() { NewPanel(d, []string{"A"}, mat.NewDense(3, 1, nil), 0) })
	require.PanicsWithValue(t, mat.ErrShape, func() { p.ReturnsTo(mat.NewDense(2, 2, nil)) })
}

func TestPanelFromRecords(t *testing.T) {
	d1, d2 := DateOf(2030, 1, 7), DateOf(2030, 1, 8)
	p, err := PanelFromRecords([]Record{
		{d2, "B", 0.02}, {d1, "A", 0.01}, {d2, "A", missing}, {d1, "C", -0.5},
	}, WeeklyPeriods)
	require.NoError(t, err)
	require.Equal(t, []Date{d1, d2}, p.Dates())
	require.Equal(t, []string{"A", "B", "C"}, p.Assets()) // sorted by identifier
	require.Equal(t, float64(WeeklyPeriods), p.PeriodsPerYear())
	require.Equal(t, 0.01, p.At(0, 0))
	require.True(t, math.IsNaN(p.At(1, 0)), "an explicit NaN is missing")
	require.True(t, math.IsNaN(p.At(0, 1)), "no record is missing")
	require.Equal(t, 0.02, p.At(1, 1))

	_, err = PanelFromRecords([]Record{{d1, "A", 0.01}, {d1, "A", 0.02}}, 0)
	require.ErrorIs(t, err, ErrDuplicate)
	require.ErrorContains(t, err, "record 1")
	_, err = PanelFromRecords([]Record{{d1, "A", 0.01}, {d2, "B", -1.5}}, 0)
	require.ErrorIs(t, err, ErrImpossible)
	require.ErrorContains(t, err, "record 1 (2030-01-08, B, -1.5)")
	_, err = PanelFromRecords(nil, 0)
	require.ErrorIs(t, err, ErrEmpty)
}

func TestPanelBuilder(t *testing.T) {
	d1, d2 := DateOf(2030, 1, 7), DateOf(2030, 1, 8)
	b, err := NewPanelBuilder([]Date{d1, d2}, []string{"A", "B"}, 0)
	require.NoError(t, err)
	require.NoError(t, b.Set(d2, "B", 0.5))
	require.ErrorIs(t, b.Set(d2, "B", 0.5), ErrDuplicate)
	require.ErrorIs(t, b.Set(d1, "Z", 0.5), ErrUnknownAsset)
	require.ErrorContains(t, b.Set(DateOf(2031, 1, 1), "A", 0.5), "date 2031-01-01 is not in the panel")
	require.ErrorIs(t, b.SetAt(0, 0, math.Inf(-1)), ErrNonFinite)
	p := b.Panel()
	require.Equal(t, 0.5, p.At(1, 1))
	require.True(t, math.IsNaN(p.At(0, 0)), "a refused value leaves the cell missing")
	_, err = NewPanelBuilder(nil, []string{"A"}, 0)
	require.ErrorIs(t, err, ErrEmpty)
}

func TestWindow(t *testing.T) {
	p := testPanel(t)
	for _, tc := range []struct {
		name        string
		asof        Date
		t           int
		first, last Date
	}{
		{"last three", DateOf(2030, 1, 11), 3, DateOf(2030, 1, 9), DateOf(2030, 1, 11)},
		{"as of a row's own date", DateOf(2030, 1, 9), 2, DateOf(2030, 1, 8), DateOf(2030, 1, 9)},
		{"as of a weekend after the data", DateOf(2030, 1, 13), 2, DateOf(2030, 1, 10), DateOf(2030, 1, 11)},
		{"longer than the history", DateOf(2030, 1, 8), 10, DateOf(2030, 1, 7), DateOf(2030, 1, 8)},
		{"all history", DateOf(2030, 1, 10), 0, DateOf(2030, 1, 7), DateOf(2030, 1, 10)},
	} {
		t.Run(tc.name, func(t *testing.T) {
			w, err := p.Window(tc.asof, tc.t)
			require.NoError(t, err)
			dates := w.Dates()
			require.Equal(t, tc.first, dates[0])
			require.Equal(t, tc.last, dates[len(dates)-1])
			require.Equal(t, p.Assets(), w.Assets())
			i := int(tc.first - DateOf(2030, 1, 7))
			require.Equal(t, p.At(i, 2), w.At(0, 2))
		})
	}
	_, err := p.Window(DateOf(2030, 1, 6), 5)
	require.ErrorIs(t, err, ErrEmpty)
}

func TestCoverageAndDropSparse(t *testing.T) {
	p := testPanel(t)
	// By hand from testPanel: A observed on rows 1, 3, 4 (gap of one at
	// row 2); B on rows 0 and 4 (gap of three); C on rows 0–3.
	want := []Coverage{
		{Asset: "A", Count: 3, First: DateOf(2030, 1, 8), Last: DateOf(2030, 1, 11), LongestGap: 1},
		{Asset: "B", Count: 2, First: DateOf(2030, 1, 7), Last: DateOf(2030, 1, 11), LongestGap: 3},
		{Asset: "C", Count: 4, First: DateOf(2030, 1, 7), Last: DateOf(2030, 1, 10), LongestGap: 0},
	}
	require.Equal(t, want, p.Coverage())

	kept, dropped := p.DropSparse(3)
	require.Equal(t, []string{"A", "C"}, kept.Assets())
	require.Equal(t, []Coverage{want[1]}, dropped)
	require.Equal(t, p.At(3, 2), kept.At(3, 1))
	none, dropped := p.DropSparse(10)
	_, n := none.Dims()
	require.Zero(t, n)
	require.Len(t, dropped, 3)

	late, dropped := p.dropSparseAfter(3, 2)
	require.Equal(t, []string{"A"}, late.Assets(), "only A has two observations in rows 3 and 4")
	require.Equal(t, []Coverage{want[1], want[2]}, dropped)
}
