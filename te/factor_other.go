//go:build !amd64 || purego

package te

func exposuresVec(b []float64, ldb, rows, kp int, x1, x2, y1, y2 []float64) bool { return false }

func factorFiguresVec(f *factorRows, te2, inv float64) int { return 0 }

func activeSumsVec(act, p, b, d []float64, l *[12]float64) int { return 0 }

func groupScatterVec(g *groupRows) int { return 0 }
