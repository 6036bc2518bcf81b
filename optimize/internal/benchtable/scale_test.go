package main

import (
	"math"
	"strings"
	"testing"
)

// TestFitCell: on times that follow a power law exactly, the least-squares
// slope on the logarithms is the power (log t = log a + b log x is a line).
func TestFitCell(t *testing.T) {
	var pts []point
	for _, x := range []float64{50, 100, 200, 1000} {
		pts = append(pts, point{x, 0.003 * math.Pow(x, 1.66)})
	}
	if got := fitCell(pts); !strings.HasPrefix(got, "exponent 1.66 ") {
		t.Errorf("fitCell = %q, want exponent 1.66", got)
	}
	if got := fitCell(pts[:1]); !strings.HasPrefix(got, "no fit") {
		t.Errorf("one size: fitCell = %q, want no fit", got)
	}
}

// TestMedian: the middle run, or the mean of the two middle ones.
func TestMedian(t *testing.T) {
	if m := (runs{secs: []float64{3, 1, 2}}).median(); m != 2 {
		t.Errorf("median of 3, 1, 2 = %g", m)
	}
	if m := (runs{secs: []float64{4, 1, 2, 3}}).median(); m != 2.5 {
		t.Errorf("median of 4, 1, 2, 3 = %g", m)
	}
}
