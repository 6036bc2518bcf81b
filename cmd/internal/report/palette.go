package report

import (
	"image/color"
	"math"
	"sync"
)

// The condition colours are a sequential ramp of our own: light cream for
// the best state through amber and terracotta to a dark maroon for the
// worst. Lightness falls evenly from best to worst, so the order survives
// greyscale printing and every kind of colour-vision deficiency; poor
// states are also hatched and every band is named in a legend (and directly
// where there is room), so no reader depends on hue.

// rampAnchor is a point of the ramp in CIE LCh(ab): chroma and hue in
// degrees. Lightness does not come from the anchors: it falls linearly from
// rampLightest to rampDarkest, so every step between neighbouring states is
// the same in greyscale.
type rampAnchor struct{ c, h float64 }

const rampLightest, rampDarkest = 96.0, 24.0

var conditionAnchors = []rampAnchor{
	{18, 95}, // best: cream
	{50, 78}, // amber
	{52, 50}, // terracotta
	{42, 30}, // brick
	{30, 15}, // worst: dark maroon
}

// conditionRamp returns n colours from best (lightest) to worst (darkest).
func conditionRamp(n int) []color.RGBA {
	out := make([]color.RGBA, n)
	for i := range out {
		f := 0.0
		if n > 1 {
			f = float64(i) / float64(n-1)
		}
		out[i] = rampAt(conditionAnchors, f)
	}
	return out
}

// rampAt interpolates the anchors linearly in LCh at f in [0, 1].
func rampAt(anchors []rampAnchor, f float64) color.RGBA {
	pos := f * float64(len(anchors)-1)
	i := min(int(pos), len(anchors)-2)
	u := pos - float64(i)
	a, b := anchors[i], anchors[i+1]
	return lch(rampLightest-f*(rampLightest-rampDarkest), a.c+u*(b.c-a.c), a.h+u*(b.h-a.h))
}

// lch converts CIE LCh(ab) (D65 white) to sRGB, lowering the chroma until
// the colour is inside the sRGB gamut so that the lightness is kept.
func lch(l, c, h float64) color.RGBA {
	for ; c >= 0; c -= 0.5 {
		if rgb, ok := labToSRGB(l, c*math.Cos(h*math.Pi/180), c*math.Sin(h*math.Pi/180)); ok {
			return rgb
		}
	}
	rgb, _ := labToSRGB(l, 0, 0)
	return rgb
}

func labToSRGB(l, a, b float64) (color.RGBA, bool) {
	const d = 6.0 / 29
	finv := func(t float64) float64 {
		if t > d {
			return t * t * t
		}
		return 3 * d * d * (t - 4.0/29)
	}
	fy := (l + 16) / 116
	x := 0.95047 * finv(fy+a/500)
	y := 1.0 * finv(fy)
	z := 1.08883 * finv(fy-b/200)
	lin := [3]float64{
		3.2404542*x - 1.5371385*y - 0.4985314*z,
		-0.9692660*x + 1.8760108*y + 0.0415560*z,
		0.0556434*x - 0.2040259*y + 1.0572252*z,
	}
	var out [3]uint8
	for i, v := range lin {
		if v < -1e-4 || v > 1+1e-4 { // the tolerance lets white and black through

			return color.RGBA{}, false
		}
		v = math.Min(math.Max(v, 0), 1)
		if v <= 0.0031308 {
			v *= 12.92
		} else {
			v = 1.055*math.Pow(v, 1/2.4) - 0.055
		}
		out[i] = uint8(math.Round(v * 255))
	}
	return color.RGBA{out[0], out[1], out[2], 255}, true
}

// lightness is the CIE L* of an sRGB colour, used to pick a text colour
// that reads on a fill.
func lightness(c color.RGBA) float64 {
	lin := func(v uint8) float64 {
		s := float64(v) / 255
		if s <= 0.04045 {
			return s / 12.92
		}
		return math.Pow((s+0.055)/1.055, 2.4)
	}
	y := 0.2126729*lin(c.R) + 0.7151522*lin(c.G) + 0.0721750*lin(c.B)
	if y > 216.0/24389 {
		return 116*math.Cbrt(y) - 16
	}
	return y * 24389 / 27
}

// inkOn returns near-black or white, whichever reads better on fill.
func inkOn(fill color.RGBA) color.RGBA {
	if lightness(fill) < 55 {
		return color.RGBA{255, 255, 255, 255}
	}
	return ink
}

var (
	ink     = color.RGBA{26, 26, 26, 255}    // text and budget marks
	gridInk = color.RGBA{190, 190, 190, 255} // light rules
)

// The inks derived in LCh are worked out on first use, not at start-up.
var (
	// spendInk fills spend bars: a cool grey-blue, apart from the
	// condition ramp.
	spendInk = sync.OnceValue(func() color.RGBA { return lch(60, 14, 250) })
	// Uncertainty bands: a very light neutral fill with mid-grey hatching
	// and edges, so that a band stays visible where a printer drops light
	// fills, and never looks like a condition state.
	bandFill = sync.OnceValue(func() color.RGBA { return lch(92, 3, 250) })
	bandEdge = sync.OnceValue(func() color.RGBA { return lch(62, 3, 250) })
)
