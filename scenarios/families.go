package scenarios

import (
	"fmt"
	"slices"
	"strings"

	"wearplan/markov"
)

// A class whose matrix comes from a fit by family (fit --by COLUMN) and
// that names no family of it is split into one class per family present
// in its segment list: the segment list carries the family columns, each
// segment goes to the family its values name, and each family becomes a
// class of its own named "CLASS (FAMILY)", with the class's treatments,
// costs and unit, its own fitted matrix, and the quantities of its
// segments (summed exactly, like the class's). Network weights stay the
// class's, shared by quantity. Targets on the class apply to each family;
// budget groups that name the class pay for all of its families.

// familySplit is what a class needs to be split by family: the fit file's
// families of its fitted class.
type familySplit struct {
	file, fitClass string
	by             []string
	families       []*FitClass
	result         *FitResult
	line           int
	// at names the covariate values whose matrices the families use
	// (at: NAME); "" for the families' own matrices.
	at string
}

// familyOf returns the family a key belongs to: the family of that name,
// or the merged family that lists it among its members.
func (fs *familySplit) familyOf(key string) *FitClass {
	for _, f := range fs.families {
		if f.Family == key || slices.Contains(f.Members, key) {
			return f
		}
	}
	return nil
}

func (fs *familySplit) names() string {
	var out []string
	for _, f := range fs.families {
		out = append(out, f.Family)
	}
	return strings.Join(out, ", ")
}

// familyColumns finds, for each class the file supplies that is to be
// split by family, the header positions of its family columns.
func familyColumns(sc *Scenario, j inventoryJob, in *csvInput) ([][]int, bool) {
	out := make([][]int, len(sc.Classes))
	ok := true
	for k := range sc.Classes {
		fs := sc.Classes[k].split
		if !j.takes[k] || fs == nil {
			continue
		}
		for _, col := range fs.by {
			i, unique := in.column(col)
			if !unique {
				ok = false
				continue
			}
			if i < 0 {
				in.is.add(in.headerLine, "", "class %q takes its matrix from %s, fitted by family of %s; the segment list has no %q column to say each segment's family (the header has %s); add it, or choose one family with deterioration: {family: NAME} (or family: all for the class's own matrix)",
					sc.Classes[k].Name, fs.file, strings.Join(fs.by, "/"), col, in.headerList())
				ok = false
				continue
			}
			out[k] = append(out[k], i)
		}
	}
	return out, ok
}

func familyKey(rec []string, at []int) string {
	parts := make([]string, len(at))
	for i, c := range at {
		parts[i] = strings.TrimSpace(rec[c])
	}
	return strings.Clone(strings.Join(parts, "/"))
}

// familyTally is what a segment list holds of one family of one class:
// its quantities' exact sums by state, its segments and their first lines.
type familyTally struct {
	sums  []exactSum
	lines lineList
}

func (inv *Inventory) addFamily(class int, family string, states, state int, billionths int64, line int) {
	if inv.families == nil {
		inv.families = map[classFamily]*familyTally{}
	}
	key := classFamily{class, family}
	ft := inv.families[key]
	if ft == nil {
		ft = &familyTally{sums: make([]exactSum, states)}
		inv.families[key] = ft
	}
	ft.sums[state].add(billionths)
	ft.lines.add(line)
}

// splitFamilies replaces each class waiting to be split by one class per
// family present in its segment list, and points the targets and budget
// groups that name it at its families.
func splitFamilies(sc *Scenario, f *fileScenario, is *issues) {
	var out []Class
	renamed := map[string][]string{}
	for k := range sc.Classes {
		c := sc.Classes[k]
		fs := c.split
		if fs == nil {
			out = append(out, c)
			continue
		}
		field := fmt.Sprintf("classes[%d] (%s).deterioration", k, c.Name)
		if c.Inventory == nil {
			is.add(fs.line, field+".fit", "%s has a matrix per family of %s for class %q (%s), but the class's inventory is typed in, so its segments' families are unknown; choose one with family: NAME (or family: all for the class's own matrix), or give a segment list with a %s column",
				fs.file, strings.Join(fs.by, "/"), fs.fitClass, fs.names(), strings.Join(fs.by, ", "))
			continue
		}
		// The tallies hold every family met, whether the segments are kept
		// or only counted.
		var unknown lineList
		var unknownKeys []string
		count := map[*FitClass]int{}
		for key, ft := range c.Inventory.families {
			if key.class != k {
				continue
			}
			fam := fs.familyOf(key.family)
			if fam == nil {
				unknownKeys = append(unknownKeys, key.family)
				unknown.merge(&ft.lines)
				continue
			}
			count[fam] += ft.lines.count
		}
		if unknown.count > 0 {
			slices.Sort(unknownKeys)
			is.addIn(c.Inventory.File, unknown.first[0], strings.Join(fs.by, "/"), "%s: %s of class %q name no family of %s (%s; its families: %s); correct the values, or fit again with these families",
				quotedList(unknownKeys), &unknown, c.Name, fs.file, strings.Join(fs.by, "/"), fs.names())
			continue
		}
		total := c.Total()
		var parts []string
		var missing []string
		var names []string
		for _, fam := range fs.families {
			if count[fam] == 0 {
				missing = append(missing, fam.Family)
				continue
			}
			sub := c
			sub.split = nil
			sub.Parent, sub.Family = c.Name, fam.Family
			sub.Name = fmt.Sprintf("%s (%s)", c.Name, fam.Family)
			sub.Segments = nil
			for _, seg := range c.Segments {
				if fs.familyOf(seg.Family) == fam {
					sub.Segments = append(sub.Segments, seg)
				}
			}
			sub.Initial = make([]float64, len(c.Initial))
			keys := fam.Members
			if len(keys) == 0 {
				keys = []string{fam.Family}
			}
			for _, member := range keys {
				if ft := c.Inventory.families[classFamily{k, member}]; ft != nil {
					for i, sum := range ft.sums {
						v, _ := sum.float()
						sub.Initial[i] += v
					}
				}
			}
			block, evidence := fam.Deterioration, evidenceOf(fs.result, fam, fs.file)
			if fs.at != "" {
				for _, p := range fam.Covariates.At {
					if p.Name == fs.at {
						block, evidence = p.Deterioration, nil
					}
				}
			}
			t, err := markov.NewTransition(block.Matrix, markov.Options{AllowImprovement: block.AllowImprovement})
			if err != nil {
				is.add(fs.line, field+".fit", "family %s in %s: %v", fam.Family, fs.file, err)
				continue
			}
			sub.Transition = t
			sub.Evidence = evidence
			if total > 0 {
				sub.Weight = c.Weight * sub.Total() / total
			}
			out = append(out, sub)
			names = append(names, sub.Name)
			parts = append(parts, fmt.Sprintf("%s %s %s in %d segments", sub.Name, num(round(sub.Total(), 3)), c.Unit, count[fam]))
		}
		renamed[c.Name] = names
		for i := range c.Inventory.Classes {
			if ic := c.Inventory.Classes[i]; ic.Class == c.Name {
				var subs []InventoryClass
				for _, sub := range out[len(out)-len(names):] {
					subs = append(subs, InventoryClass{Class: sub.Name, Unit: sub.Unit, Segments: count[fs.familyOf(sub.Family)], Quantity: sub.Total()})
				}
				c.Inventory.Classes = slices.Replace(c.Inventory.Classes, i, i+1, subs...)
				break
			}
		}
		note := fmt.Sprintf("class %s is split by family of %s (fit file %s, its segment list's %s column): %s; each family keeps the class's treatments and costs and uses its own fitted matrix. Targets on %s apply to each family; budget groups naming %s pay for all of them",
			c.Name, strings.Join(fs.by, "/"), fs.file, strings.Join(fs.by, ", "), strings.Join(parts, "; "), c.Name, c.Name)
		if len(missing) > 0 {
			note += fmt.Sprintf(". No segment belongs to family %s", strings.Join(missing, ", "))
		}
		sc.Notes = append(sc.Notes, note)
	}
	if len(renamed) == 0 {
		return
	}
	sc.Classes = out
	// Targets and budget groups as written name the class: point them at
	// its families.
	var targets []fileTarget
	for _, t := range f.Targets {
		subs, ok := renamed[t.Class]
		if !ok {
			targets = append(targets, t)
			continue
		}
		for _, name := range subs {
			c := t
			c.Class = name
			targets = append(targets, c)
		}
	}
	f.Targets = targets
	if f.Budget != nil {
		for g := range f.Budget.Groups {
			var classes []string
			for _, name := range f.Budget.Groups[g].Classes {
				if subs, ok := renamed[name]; ok {
					classes = append(classes, subs...)
					continue
				}
				classes = append(classes, name)
			}
			f.Budget.Groups[g].Classes = classes
		}
	}
}
