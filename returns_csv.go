package riskmodel

import (
	"encoding/csv"
	"io"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// readReturnsCSV reads a long or a wide CSV return file, chosen by whether the
// header has an "asset" column.
func readReturnsCSV(path string, periodsPerYear float64) (*Panel, error) {
	c, err := openCSV(path)
	if err != nil {
		return nil, err
	}
	long := c.index("asset") >= 0
	if long {
		c.Close()
		return readLongCSV(path, periodsPerYear)
	}
	defer c.Close()
	return readWideCSV(c, periodsPerYear)
}

// readLongCSV reads "date,asset,return" in two passes: the first validates
// every row and collects the dates and assets, the second fills the panel.
func readLongCSV(path string, periodsPerYear float64) (*Panel, error) {
	x := newLongIndex()
	err := scanLongCSV(path, func(line int, d Date, asset string, v float64) error {
		x.addString(d, asset)
		return nil
	})
	if err != nil {
		return nil, err
	}
	b, err := x.builder(path, periodsPerYear)
	if err != nil {
		return nil, err
	}
	err = scanLongCSV(path, func(line int, d Date, asset string, v float64) error {
		return b.SetAt(b.row[d], b.p.col[asset], v)
	})
	if err != nil {
		return nil, err
	}
	return b.Panel(), nil
}

// scanLongCSV calls fn for every row of a long CSV file after checking its
// date and return. An error of fn is reported at the row's asset cell.
func scanLongCSV(path string, fn func(line int, d Date, asset string, v float64) error) error {
	c, err := openCSV(path)
	if err != nil {
		return err
	}
	defer c.Close()
	idx, err := c.require(true, "date", "asset", "return")
	if err != nil {
		return err
	}
	id, ia, ir := idx[0], idx[1], idx[2]
	for {
		rec, line, err := c.next()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			return err
		}
		d, err := parseDateCell(rec[id])
		if err != nil {
			return c.at(line, id, rec[id], err)
		}
		asset := strings.TrimSpace(rec[ia])
		if asset == "" {
			return c.at(line, ia, "", ErrMissingValue)
		}
		v, err := parseReturn(rec[ir])
		if err != nil {
			return c.at(line, ir, rec[ir], err)
		}
		if err := fn(line, d, asset, v); err != nil {
			return c.at(line, ia, asset, err)
		}
	}
}

// readWideCSV reads "date" and one column per asset; rows may come in any
// date order but a date may appear only once.
func readWideCSV(c *csvFile, periodsPerYear float64) (*Panel, error) {
	idx, err := c.require(false, "date")
	if err != nil {
		return nil, err
	}
	id := idx[0]
	if len(c.header) < 2 {
		return nil, &FileError{File: c.path, Line: 1, Column: "asset",
			Err: detail(ErrMissingColumn, "a long file needs date,asset,return and a wide file date and one column per asset")}
	}
	var assets []string
	for k, h := range c.header {
		if k != id {
			assets = append(assets, h)
		}
	}
	n := len(assets)
	var (
		dates []Date
		lines []int
		data  []float64
	)
	for {
		rec, line, err := c.next()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		d, err := parseDateCell(rec[id])
		if err != nil {
			return nil, c.at(line, id, rec[id], err)
		}
		dates = append(dates, d)
		lines = append(lines, line)
		for k, s := range rec {
			if k == id {
				continue
			}
			v, err := parseReturn(s)
			if err != nil {
				return nil, c.at(line, k, s, err)
			}
			data = append(data, v)
		}
	}
	t := len(dates)
	order := make([]int, t)
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int { return int(dates[a]) - int(dates[b]) })
	sorted := make([]Date, t)
	r := mat.NewDense(t, n, nil)
	for i, k := range order {
		sorted[i] = dates[k]
		if i > 0 && sorted[i] == sorted[i-1] {
			return nil, c.at(lines[k], id, dates[k].String(), detail(ErrDuplicate, "the date has another row on line %d", lines[order[i-1]]))
		}
		r.SetRow(i, data[k*n:(k+1)*n])
	}
	p, err := newPanelShell(sorted, assets, periodsPerYear)
	if err != nil {
		return nil, &FileError{File: c.path, Err: err}
	}
	p.r = r
	return p, nil
}

// WriteReturnsCSVFile writes p to a CSV file; see WriteReturnsCSV.
func WriteReturnsCSVFile(path string, p *Panel, wide bool) error {
	return createCSV(path, func(w io.Writer) error { return WriteReturnsCSV(w, p, wide) })
}

// WriteReturnsCSV writes p as CSV. The long form is "date,asset,return"
// with one line per observed return in date order and assets in column order;
// missing cells are omitted except one empty line per date or asset with no
// observation at all, so that ReadReturns gives back the same panel (with the
// assets sorted, as long files are read). The wide form is "date" and one
// column per asset, a missing cell is empty. Returns are formatted with
// strconv.FormatFloat(v, 'g', -1, 64), which round-trips exactly.
func WriteReturnsCSV(w io.Writer, p *Panel, wide bool) error {
	cw := csv.NewWriter(w)
	t, _ := p.Dims()
	if wide {
		rec := append([]string{"date"}, p.assets...)
		if err := cw.Write(rec); err != nil {
			return err
		}
		for i := 0; i < t; i++ {
			rec[0] = p.dates[i].String()
			for j, v := range p.r.RawRowView(i) {
				rec[j+1] = ""
				if !math.IsNaN(v) {
					rec[j+1] = formatFloat(v)
				}
			}
			if err := cw.Write(rec); err != nil {
				return err
			}
		}
	} else {
		rec := []string{"date", "asset", "return"}
		if err := cw.Write(rec); err != nil {
			return err
		}
		err := longCells(p, func(i, j int, v float64) error {
			rec[0], rec[1], rec[2] = p.dates[i].String(), p.assets[j], ""
			if !math.IsNaN(v) {
				rec[2] = formatFloat(v)
			}
			return cw.Write(rec)
		})
		if err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}
