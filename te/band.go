package te

// Band is the range of tracking error a mandate allows: enhanced-index
// mandates set a floor (the manager must take some active risk) and a
// ceiling. Lower 0 means no floor; Upper 0 means no ceiling. Both are in the
// units of the tracking error checked against them (per period or
// annualised: the caller keeps them consistent).
type Band struct {
	Lower, Upper float64
}

// BandStatus says where a tracking error falls relative to a Band.
type BandStatus int

const (
	Within BandStatus = iota // Lower ≤ TE ≤ Upper
	Below                    // TE < Lower: the floor is broken
	Above                    // TE > Upper: the ceiling is broken
)

func (s BandStatus) String() string {
	switch s {
	case Within:
		return "within"
	case Below:
		return "below lower limit"
	case Above:
		return "above upper limit"
	}
	return "unknown"
}

// BandCheck is the result of Band.Check: the status, the limit that is
// broken (0 when Within) and by how much, as a positive amount
// (Lower − TE or TE − Upper; 0 when Within).
type BandCheck struct {
	Status BandStatus
	Limit  float64
	Breach float64
}

// Check compares te with the band. The limits are inclusive: a tracking
// error exactly at a limit is Within.
//
// Check returns ErrBand for a negative or non-finite limit or a Lower above a
// non-zero Upper, and an *InputError wrapping ErrNonFinite or ErrNegative for
// a bad te.
func (b Band) Check(te float64) (BandCheck, error) {
	if !finite(b.Lower) || !finite(b.Upper) || b.Lower < 0 || b.Upper < 0 ||
		(b.Upper > 0 && b.Lower > b.Upper) {
		return BandCheck{}, ErrBand
	}
	if err := checkVar("tracking error", -1, te); err != nil {
		return BandCheck{}, err
	}
	switch {
	case te < b.Lower:
		return BandCheck{Status: Below, Limit: b.Lower, Breach: b.Lower - te}, nil
	case b.Upper > 0 && te > b.Upper:
		return BandCheck{Status: Above, Limit: b.Upper, Breach: te - b.Upper}, nil
	}
	return BandCheck{Status: Within}, nil
}
