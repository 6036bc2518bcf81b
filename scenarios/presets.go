package scenarios

import (
	"sort"
	"strings"
)

// Built-in condition scales. A class names one with scale: preset:NAME, or
// a scale under scales: is written {preset: NAME} and may then replace the
// preset's groups. Preset scales go through the same checks as scales
// written in the file (buildScale), so they tile their index range.
//
// Each preset cites the standard its states and thresholds come from.
// Representative values (used for averages) are the midpoints of the
// ranges, or the rating itself for one-number states; they are wearplan's
// choice, not the standard's.

// PresetPrefix marks a preset scale name in a class's scale key.
const PresetPrefix = "preset:"

// inPerMiPerMPerKm converts roughness: 1 m/km = 63.36 in/mi
// (1,000 mm per km = 39.37 in per 0.62137 mi; exact: 63.36).
const inPerMiPerMPerKm = 63.36

// iriCapInPerMi is the worst end of the IRI presets. 23 CFR 490 leaves
// the poor class open above 170 in/mi; a finite end is needed to map the
// scale onto condition scores, and 400 in/mi (6.3 m/km) is past what a
// paved road carrying traffic reports (common practice, no source).
const iriCapInPerMi = 400

type presetState struct {
	name            string
	min, max, value float64
}

// preset is one built-in scale.
type preset struct {
	name   string
	title  string
	source string
	states []presetState
	groups map[string][]string
	// betterKeepsEnd, per pair of neighbouring states, says that the shared
	// end counts in the better state (see Scale.StateOf).
	betterKeepsEnd []bool
}

// presetTable returns the built-in scales. It builds them anew on each call
// so that no caller can change another's.
func presetTable() []preset {
	iri := func(name, unit string, f float64) preset {
		good, poor, end := 95/f, 170/f, iriCapInPerMi/f
		source := "23 CFR 490.313 (US pavement condition measures): IRI below 95 in/mi good, 95 to 170 fair, " +
			"above 170 poor (from memory)"
		if f != 1 {
			source += "; converted at 1 m/km = 63.36 in/mi"
		}
		return preset{
			name:   name,
			title:  "International Roughness Index in " + unit + ", good/fair/poor (lower is better)",
			source: source,
			states: []presetState{
				{"Good", 0, good, good / 2},
				{"Fair", good, poor, (good + poor) / 2},
				{"Poor", poor, end, (poor + end) / 2},
			},
			groups: map[string][]string{"good": {"Good"}, "fair": {"Fair"}, "poor": {"Poor"}},
			// 95 itself is fair (good is below 95); 170 itself is fair too
			// (poor is above 170).
			betterKeepsEnd: []bool{false, true},
		}
	}
	return []preset{
		{
			name:  "pci-astm-d6433",
			title: "Pavement Condition Index 0-100, the seven rating classes",
			source: "ASTM D6433 (pavement condition index surveys), rating classes Good 86-100, Satisfactory 71-85, " +
				"Fair 56-70, Poor 41-55, Very Poor 26-40, Serious 11-25, Failed 0-10 (from memory); grouping into " +
				"good/fair/poor is a common choice, no source",
			states: []presetState{
				{"Good", 86, 100, 93},
				{"Satisfactory", 71, 85, 78},
				{"Fair", 56, 70, 63},
				{"Poor", 41, 55, 48},
				{"Very Poor", 26, 40, 33},
				{"Serious", 11, 25, 18},
				{"Failed", 0, 10, 5},
			},
			groups: map[string][]string{
				"good": {"Good", "Satisfactory"},
				"fair": {"Fair"},
				"poor": {"Poor", "Very Poor", "Serious", "Failed"},
			},
		},
		iri("iri-23cfr490-in-mi", "in/mi", 1),
		iri("iri-23cfr490-m-km", "m/km", inPerMiPerMPerKm),
		{
			name:  "bridge-nbi-0-9",
			title: "Bridge component condition rating 0-9 (deck, superstructure, substructure, culvert)",
			source: "US National Bridge Inventory coding of condition ratings 9 (excellent) to 0 (failed); " +
				"23 CFR 490.409: good when the rating is 7 or more, poor when 4 or less, fair otherwise (from memory)",
			states: []presetState{
				{"Excellent (9)", 9, 9, 9},
				{"Very good (8)", 8, 8, 8},
				{"Good (7)", 7, 7, 7},
				{"Satisfactory (6)", 6, 6, 6},
				{"Fair (5)", 5, 5, 5},
				{"Poor (4)", 4, 4, 4},
				{"Serious (3)", 3, 3, 3},
				{"Critical (2)", 2, 2, 2},
				{"Imminent failure (1)", 1, 1, 1},
				{"Failed (0)", 0, 0, 0},
			},
			groups: map[string][]string{
				"good": {"Excellent (9)", "Very good (8)", "Good (7)"},
				"fair": {"Satisfactory (6)", "Fair (5)"},
				"poor": {"Poor (4)", "Serious (3)", "Critical (2)", "Imminent failure (1)", "Failed (0)"},
			},
		},
		{
			name:   "five-state",
			title:  "Generic five-state scale on a 0-100 index",
			source: "generic five-state condition grading, very good to very poor in equal bands (common practice, no source)",
			states: []presetState{
				{"Very good", 80, 100, 90},
				{"Good", 60, 80, 70},
				{"Fair", 40, 60, 50},
				{"Poor", 20, 40, 30},
				{"Very poor", 0, 20, 10},
			},
			groups: map[string][]string{
				"good": {"Very good", "Good"},
				"fair": {"Fair"},
				"poor": {"Poor", "Very poor"},
			},
		},
	}
}

// PresetInfo describes a built-in scale for help texts and documentation.
type PresetInfo struct {
	Name, Title, Source string
}

// Presets lists the built-in scales.
func Presets() []PresetInfo {
	var out []PresetInfo
	for _, p := range presetTable() {
		out = append(out, PresetInfo{Name: p.name, Title: p.title, Source: p.source})
	}
	return out
}

func findPreset(name string) (preset, bool) {
	for _, p := range presetTable() {
		if p.name == name {
			return p, true
		}
	}
	return preset{}, false
}

func presetNames() string {
	var names []string
	for _, p := range presetTable() {
		names = append(names, p.name)
	}
	sort.Strings(names)
	return strings.Join(names, ", ")
}

// presetFileScale writes a preset as if it had been written in the file,
// with the lines of the place that named it, so that buildScale checks it
// like any other scale. groups, when given, replace the preset's.
func presetFileScale(p preset, line int, groups map[string][]string) *fileScale {
	fs := &fileScale{Lines: lines{"": line}}
	for _, st := range p.states {
		mn, mx, v := st.min, st.max, st.value
		fs.States = append(fs.States, fileState{Name: st.name, Min: &mn, Max: &mx, Value: &v, Lines: lines{"": line}})
	}
	fs.Groups = p.groups
	if groups != nil {
		fs.Groups = groups
	}
	return fs
}

// buildPreset builds the preset name for a scale at path; line is where it
// was named.
func buildPreset(scaleName, presetName string, line int, groups map[string][]string, path string, is *issues) *Scale {
	p, ok := findPreset(presetName)
	if !ok {
		is.add(line, path, "unknown preset %q; presets are %s", presetName, presetNames())
		return nil
	}
	s := buildScale(scaleName, presetFileScale(p, line, groups), path, is)
	if s == nil {
		return nil
	}
	s.Preset, s.Source = p.name, p.source
	s.betterKeepsEnd = append([]bool(nil), p.betterKeepsEnd...)
	return s
}
