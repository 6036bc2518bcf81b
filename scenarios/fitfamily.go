package scenarios

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"wearplan/markov"
)

// fitWhole fits a class and, when the fit is by family, each family, with
// the test of whether they differ and the merging of those that do not.
func fitWhole(c *InspectionClass, opt FitOptions, is *issues) (*FitClass, bool) {
	fc, pooled, ok := fitClass(c, c.Name, opt, is)
	if !ok || len(opt.By) == 0 {
		return fc, ok
	}
	fc.By = slices.Clone(opt.By)
	groups := familyGroups(c)
	s := markov.Structure{OneStep: opt.OneStep, Improvement: opt.KeepImprovements}
	yearly := opt.Method == MethodCounting
	bad := false
	for _, g := range groups {
		g.fit, g.stats, ok = fitClass(&g.class, familyLabel(c.Name, g.name, opt.By), opt, is)
		bad = bad || !ok
	}
	if bad {
		return nil, false
	}
	if len(groups) > 1 {
		fc.Homogeneity = homogeneityReport(groups, pooled, s, yearly)
	}
	if opt.MergeAlike && len(groups) > 1 {
		var merged bool
		groups, fc.Merges, merged = mergeAlike(c, groups, opt, s, yearly, is)
		if !merged {
			return nil, false
		}
		switch {
		case len(fc.Merges) == 0:
		case len(groups) > 1:
			fc.MergedHomogeneity = homogeneityReport(groups, pooled, s, yearly)
		default:
			fc.MergedHomogeneity = &FitHomogeneity{Families: 1, Note: "every family was merged into one: no two of them differ at the 5% level, so the class's own matrix serves them all"}
		}
	}
	for _, g := range groups {
		g.fit.Family, g.fit.Members = g.name, g.members
		g.fit.Scale, g.fit.States = "", nil
		fc.Families = append(fc.Families, *g.fit)
	}
	return fc, true
}

// familyGroup is one family of a class: its inspections and fit.
type familyGroup struct {
	name    string
	members []string
	class   InspectionClass
	fit     *FitClass
	stats   *groupFit
}

func familyLabel(class, family string, by []string) string {
	return fmt.Sprintf("%s, family %s (%s)", class, family, strings.Join(by, "/"))
}

// familyGroups splits a class's histories by family. A pair belongs to the
// family of its first inspection: where an asset's family changes, its
// history is cut, the inspection at the change ending the old family's
// part and starting the new one's.
func familyGroups(c *InspectionClass) []*familyGroup {
	groups := make([]*familyGroup, len(c.Families))
	for f, name := range c.Families {
		groups[f] = &familyGroup{name: name, members: []string{name},
			class: InspectionClass{Name: c.Name, Scale: c.Scale}}
	}
	add := func(f int, asset string, part []markov.Inspection) {
		g := &groups[f].class
		g.Assets = append(g.Assets, asset)
		g.Histories = append(g.Histories, part)
		g.Rows += len(part)
	}
	for a, h := range c.Histories {
		start := 0
		for k := 1; k <= len(h); k++ {
			if k < len(h) && h[k].Stratum == h[k-1].Stratum {
				continue
			}
			end := min(k+1, len(h)) // the inspection at a change ends the old part
			add(h[start].Stratum, c.Assets[a], h[start:end:end])
			start = k
		}
	}
	return groups
}

func homogeneityReport(groups []*familyGroup, pooled *groupFit, s markov.Structure, yearly bool) *FitHomogeneity {
	counts := make([]*markov.Counts, len(groups))
	lls := make([]float64, len(groups))
	for f, g := range groups {
		counts[f], lls[f] = g.stats.counts, g.stats.ll
	}
	h := markov.TestHomogeneity(counts, lls, pooled.p, pooled.ll, s, yearly)
	out := &FitHomogeneity{Families: len(groups)}
	if h.DF == 0 {
		out.Note = "nothing to test: the families share no state with more than one possible move"
		return out
	}
	lp := sig(h.LRPValue, 4)
	out.LikelihoodRatio = &FitStatTest{Statistic: round(h.LR, 3), DF: h.DF, PValue: &lp}
	if !math.IsNaN(h.Pearson) {
		pp := sig(h.PearsonPValue, 4)
		out.AndersonGoodman = &FitStatTest{Statistic: round(h.Pearson, 3), DF: h.DF, PValue: &pp}
	}
	out.Differ = h.LRPValue < FamilyLevel
	if out.Differ {
		out.Note = "the families differ at the 5% level: each family's own matrix describes it better than the class's"
	} else {
		out.Note = "no evidence at the 5% level that the families differ: the class's matrix may serve them all, and a family's own matrix mostly adds noise"
	}
	return out
}

// mergeAlike merges, step by step, the two families whose likelihood-ratio
// test of sameness has the largest p-value, while it is FamilyLevel or
// more, and refits the merged families.
func mergeAlike(c *InspectionClass, groups []*familyGroup, opt FitOptions, s markov.Structure, yearly bool, is *issues) ([]*familyGroup, []FitMerge, bool) {
	var merges []FitMerge
	fit := func(cn *markov.Counts) (*markov.Transition, float64, error) {
		if yearly {
			p, err := markov.CountingMLE(cn, s)
			if err != nil {
				return nil, 0, err
			}
			return p, markov.LogLikelihood(cn, p), nil
		}
		p, info, err := markov.IntervalMLE(cn, s, nil)
		return p, info.LogLikelihood, err
	}
	for len(groups) > 1 {
		bestP, ba, bb := -1.0, 0, 0
		var bestTest markov.Homogeneity
		for a := 0; a < len(groups); a++ {
			for b := a + 1; b < len(groups); b++ {
				ga, gb := groups[a].stats, groups[b].stats
				both := markov.Pooled(ga.counts, gb.counts)
				p, ll, err := fit(both)
				if err != nil {
					continue
				}
				h := markov.TestHomogeneity([]*markov.Counts{ga.counts, gb.counts}, []float64{ga.ll, gb.ll}, p, ll, s, yearly)
				pv := h.LRPValue
				if h.DF == 0 {
					pv = 1
				}
				if pv > bestP {
					bestP, ba, bb, bestTest = pv, a, b, h
				}
			}
		}
		if bestP < FamilyLevel {
			break
		}
		ga, gb := groups[ba], groups[bb]
		m := &familyGroup{members: append(slices.Clone(ga.members), gb.members...), class: InspectionClass{Name: c.Name, Scale: c.Scale}}
		slices.Sort(m.members)
		m.name = strings.Join(m.members, " + ")
		for _, g := range []*familyGroup{ga, gb} {
			m.class.Assets = append(m.class.Assets, g.class.Assets...)
			m.class.Histories = append(m.class.Histories, g.class.Histories...)
			m.class.Rows += g.class.Rows
		}
		var ok bool
		m.fit, m.stats, ok = fitClass(&m.class, familyLabel(c.Name, m.name, opt.By), opt, is)
		if !ok {
			return nil, nil, false
		}
		pv := sig(bestP, 4)
		test := FitStatTest{Statistic: round(bestTest.LR, 3), DF: bestTest.DF, PValue: &pv}
		merges = append(merges, FitMerge{Merged: []string{ga.name, gb.name}, Into: m.name, Test: test})
		rest := []*familyGroup{}
		for k, g := range groups {
			if k != ba && k != bb {
				rest = append(rest, g)
			}
		}
		groups = append(rest, m)
		slices.SortFunc(groups, func(x, y *familyGroup) int { return strings.Compare(x.name, y.name) })
	}
	return groups, merges, true
}
