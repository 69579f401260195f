package riskmodel

import (
	"fmt"
	"time"
)

// Date is a calendar date with no time of day and no time zone, stored as the
// number of days since 1970-01-01. It is the same integer that a Parquet DATE
// column holds, so it crosses file boundaries without conversion.
//
// The zero value is 1970-01-01.
type Date int32

// DateOf returns the Date for a year, month and day. Out-of-range months and
// days normalise as time.Date does (January 32 is February 1).
func DateOf(year int, month time.Month, day int) Date {
	t := time.Date(year, month, day, 0, 0, 0, 0, time.UTC)
	return Date(t.Unix() / 86400)
}

// DateFromTime returns the calendar date of t in t's own location, so that a
// local midnight is not pushed to the previous day by a conversion to UTC.
func DateFromTime(t time.Time) Date {
	y, m, d := t.Date()
	return DateOf(y, m, d)
}

// ParseDate parses an ISO 8601 calendar date, "2006-01-02".
func ParseDate(s string) (Date, error) {
	t, err := time.Parse(time.DateOnly, s)
	if err != nil {
		return 0, fmt.Errorf("riskmodel: date %q is not of the form YYYY-MM-DD", s)
	}
	return DateFromTime(t), nil
}

// Time returns midnight UTC of d.
func (d Date) Time() time.Time { return time.Unix(int64(d)*86400, 0).UTC() }

// String formats d as "2006-01-02".
func (d Date) String() string { return d.Time().Format(time.DateOnly) }

// AddDays returns the date n days after d (before d if n is negative).
func (d Date) AddDays(n int) Date { return d + Date(n) }

// Weekday returns the day of the week of d.
func (d Date) Weekday() time.Weekday { return d.Time().Weekday() }
