package riskmodel

import (
	"fmt"
	"strconv"
)

// recordWindow makes the model's settings say how many dates were used: a
// requested window longer than the history up to the as-of date is cut to
// it, and the record and the notes say so.
func recordWindow(m *Model, rep *BuildReport, requested int) {
	history := rep.Dates + len(rep.EmptyDates)
	if history >= requested {
		return
	}
	m.Settings["window"] = strconv.Itoa(history)
	m.Settings["window_requested"] = strconv.Itoa(requested)
	rep.Notes = append(rep.Notes, fmt.Sprintf("window of %d dates requested, the history up to %s has %d: used %d (from %s)",
		requested, rep.AsOf, history, history, rep.Start))
}

// recordGroups records the grouping of the specific-variance shrinkage for
// the methods that use it: "sector: 11 groups", or "one group" without
// Groups.
func recordGroups(m *Model, o BuildOptions) {
	switch o.Method {
	case MethodFactor, MethodExposure, MethodHybrid:
	default:
		return
	}
	if o.Factor.Groups == nil {
		m.Settings["specific_groups"] = "one group"
		return
	}
	name := o.Factor.GroupsName
	if name == "" {
		name = "groups"
	}
	seen := map[string]bool{}
	for _, a := range m.Assets {
		seen[o.Factor.Groups[a]] = true
	}
	m.Settings["specific_groups"] = fmt.Sprintf("%s: %d groups", name, len(seen))
}
