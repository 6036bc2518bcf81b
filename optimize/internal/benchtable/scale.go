package main

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"strings"

	"wearplan/optimize"
)

// point is one finished whole-process plan: the size measured and its time.
type point struct{ x, secs float64 }

// scale plans networks past state-wide (make bench-scale): the whole
// `plan` process, once per seed, on 50 to 1,000 classes of 10 states, 8
// treatments and 40 years, then on 100 classes with fewer and more states
// and years; and fits how the time grows with each.
func (b *bench) scale(big bool, seeds int, catalogue bool) {
	gen := "optimize.Generate (binding yearly budget, share 0.15 as in make bench; max-condition, no targets)"
	if catalogue {
		gen = "the catalogue generator (GenSpec.Catalogue: every class with its own treatment copies, binding level budget and network poor-share target)"
	}
	fmt.Printf("Whole `%s plan --format json FILE >/dev/null` processes on models from %s, seeds 1-%d, one run each with a limit of %s (a run past it is stopped and shows as \"> %s\"; a run that exits with an error as \"failed\"). Peak = the process's resident-set high-water mark (GNU time's %%M).\n\n", b.bin, gen, seeds, b.limit, fmtSecs(b.limit.Seconds()))
	classes := []int{50, 100, 200, 1000}
	if big {
		classes = []int{50, 100, 200, 500, 1000}
	}
	spec := func(c, s, y int) optimize.GenSpec {
		return optimize.GenSpec{Classes: c, States: s, Treatments: 8, Years: y, BudgetShare: 0.15, Catalogue: catalogue}
	}
	header := []string{"model (C x S x T x Y)", "scenario file"}
	for s := 1; s <= seeds; s++ {
		header = append(header, fmt.Sprintf("seed %d", s))
	}
	header = append(header, "planned", "median of those planned", "largest peak")
	fmt.Println("| " + strings.Join(header, " | ") + " |")
	fmt.Println("|" + strings.Repeat("---|", len(header)))
	var byClasses, byStates, byYears []point
	for _, c := range classes {
		byClasses = append(byClasses, b.scaleRow(spec(c, 10, 40), seeds, float64(c))...)
	}
	for _, s := range []int{6, 14} {
		byStates = append(byStates, b.scaleRow(spec(100, s, 40), seeds, float64(s))...)
	}
	for _, y := range []int{20, 80} {
		byYears = append(byYears, b.scaleRow(spec(100, 10, y), seeds, float64(y))...)
	}
	// The 100 x 10 x 8 x 40 runs count for states and years too.
	for _, pt := range byClasses {
		if pt.x == 100 {
			byStates = append(byStates, point{10, pt.secs})
			byYears = append(byYears, point{40, pt.secs})
		}
	}
	fmt.Println("\nGrowth of the whole-process time, least squares on log time against log size over every run that finished (a run past the limit or failed is left out, which flatters the fit where runs fail):")
	fmt.Printf("- classes (x 10 x 8 x 40, %s classes): %s\n", joinInts(classes), fitCell(byClasses))
	fmt.Printf("- states (100 x 6, 10, 14 states x 8 x 40): %s\n", fitCell(byStates))
	fmt.Printf("- years (100 x 10 x 8 x 20, 40, 80 years): %s\n", fitCell(byYears))
}

// scaleRow plans one size once per seed and prints its row; it returns
// the finished runs with x as their size.
func (b *bench) scaleRow(spec optimize.GenSpec, seeds int, x float64) []point {
	row := []string{spec.String(), "-"}
	var pts []point
	var secs []float64
	peak, fileMiB := 0.0, 0.0
	for s := 1; s <= seeds; s++ {
		p := optimize.Generate(rand.New(rand.NewPCG(uint64(s), 1)), spec)
		file, _, err := b.scenarioFile(p, fmt.Sprintf("%s-seed%d", spec, s))
		if err != nil {
			row = append(row, "failed ("+shorten(err.Error())+")")
			continue
		}
		if st, err := os.Stat(file); err == nil {
			fileMiB = math.Max(fileMiB, float64(st.Size())/(1<<20))
		}
		r := runProcess(b.limit, false, b.bin, "plan", "--format", "json", "--timeout", b.limit.String(), file)
		_ = os.Remove(file)
		peak = math.Max(peak, r.peakMiB)
		switch {
		case r.timeout:
			row = append(row, "> "+fmtSecs(b.limit.Seconds()))
		case r.failed != "":
			row = append(row, "failed ("+r.failed+")")
		default:
			row = append(row, fmtSecs(r.secs))
			secs = append(secs, r.secs)
			pts = append(pts, point{x, r.secs})
		}
	}
	row[1] = fmt.Sprintf("%.1f MiB", fileMiB)
	med := "-"
	if len(secs) > 0 {
		med = fmtSecs(runs{secs: secs}.median())
	}
	row = append(row, fmt.Sprintf("%d of %d", len(secs), seeds), med, fmtPeak(peak))
	fmt.Println("| " + strings.Join(row, " | ") + " |")
	return pts
}

// fitCell fits time = a * x^b by least squares on the logarithms and says
// b, or why there is no fit.
func fitCell(pts []point) string {
	xs := map[float64]bool{}
	for _, p := range pts {
		xs[p.x] = true
	}
	if len(xs) < 2 {
		return "no fit (runs finished at fewer than two sizes)"
	}
	var sx, sy, sxx, sxy float64
	n := float64(len(pts))
	for _, p := range pts {
		x, y := math.Log(p.x), math.Log(p.secs)
		sx, sy, sxx, sxy = sx+x, sy+y, sxx+x*x, sxy+x*y
	}
	slope := (n*sxy - sx*sy) / (n*sxx - sx*sx)
	return fmt.Sprintf("exponent %.2f (%d runs at %d sizes)", slope, len(pts), len(xs))
}

func joinInts(v []int) string {
	s := make([]string, len(v))
	for i, x := range v {
		s[i] = fmt.Sprint(x)
	}
	return strings.Join(s, ", ")
}
