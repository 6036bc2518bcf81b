package scenarios

import (
	"errors"
	"fmt"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
)

// ScaleSet holds the condition scales of a file and, when the file is a
// scenario, the scale each of its classes uses. It is how commands that
// read condition data (such as fitting matrices from inspections) map
// index values to states without needing a whole valid scenario.
type ScaleSet struct {
	// Source names the file.
	Source string
	// Scales by name.
	Scales map[string]*Scale
	// ClassScale maps each class of a scenario to its scale's name; empty
	// for a file that holds only scales.
	ClassScale map[string]string
	// Classes lists the scenario's classes in file order.
	Classes []string
}

// LoadScaleSet reads the scales: section of a scenario or of a file that
// holds only scales: (same syntax), and the class-to-scale mapping of a
// scenario's classes:. The file is parsed strictly, but nothing else in
// it is checked: a scenario whose fit files do not exist yet still gives
// its scales.
func LoadScaleSet(path string) (*ScaleSet, error) {
	name := filepath.Base(path)
	data, err := fs.ReadFile(os.DirFS(filepath.Dir(path)), name)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return nil, &InputError{Issues: []*Issue{{File: path, Msg: "file not found; check the path"}}}
		}
		return nil, &InputError{Issues: []*Issue{{File: path, Msg: fmt.Sprintf("cannot read the file: %v", err)}}}
	}
	root, err := parseNode(path, data)
	if err != nil {
		return nil, err
	}
	is := &issues{file: path}
	var f fileScenario
	d := &decoder{issues: is}
	d.decode(root, reflect.ValueOf(&f).Elem(), "")
	if err := is.err(); err != nil {
		return nil, err
	}
	set := &ScaleSet{Source: path, Scales: buildScales(&f, is), ClassScale: map[string]string{}}
	for k, c := range f.Classes {
		name := strings.TrimSpace(c.Name)
		if name == "" {
			continue
		}
		if _, ok := f.Scales[c.Scale]; !ok {
			is.add(c.Lines.of("scale"), fmt.Sprintf("classes[%d] (%s).scale", k, name), "unknown scale %q; define it under scales", c.Scale)
			continue
		}
		if _, dup := set.ClassScale[name]; !dup {
			set.Classes = append(set.Classes, name)
		}
		set.ClassScale[name] = c.Scale
	}
	if err := is.err(); err != nil {
		return nil, err
	}
	return set, nil
}

// Names lists the scale names, sorted.
func (s *ScaleSet) Names() []string { return sortedKeys(s.Scales) }

// ForClass returns the scale of a scenario class, or nil.
func (s *ScaleSet) ForClass(class string) *Scale {
	if name, ok := s.ClassScale[class]; ok {
		return s.Scales[name]
	}
	return nil
}

// StateOf returns the state whose index range holds v, or -1 when v lies
// outside the scale. A value on the shared end of two ranges (80 on a
// scale with 60-80 and 80-100) belongs to the better state; a value
// between two whole-number ranges (85.4 with 71-85 and 86-100) is rounded
// to the nearest whole number first (85.5 rounds up).
func (s *Scale) StateOf(v float64) int {
	if math.IsNaN(v) {
		return -1
	}
	for pass := 0; pass < 2; pass++ {
		for i, st := range s.States {
			if v >= st.Min && v <= st.Max {
				return i
			}
		}
		r := math.Round(v)
		if r == v {
			break
		}
		v = r
	}
	return -1
}

// ParseCondition reads a condition as written in a data file: an index
// value mapped through the scale's ranges, or the name of a state (case
// and surrounding spaces ignored). It returns the state and a message
// saying what is wrong when it cannot.
func (s *Scale) ParseCondition(text string) (int, string) {
	t := strings.TrimSpace(text)
	if t == "" {
		return -1, "condition is empty; give an index value or a state name"
	}
	if v, err := strconv.ParseFloat(t, 64); err == nil && !math.IsInf(v, 0) && !math.IsNaN(v) {
		if i := s.StateOf(v); i >= 0 {
			return i, ""
		}
		lo, hi := math.Min(s.Best, s.Worst), math.Max(s.Best, s.Worst)
		return -1, fmt.Sprintf("condition %s is outside scale %q (%s to %s); check the value or the class's scale", t, s.Name, num(lo), num(hi))
	}
	for i, st := range s.States {
		if strings.EqualFold(strings.TrimSpace(st.Name), t) {
			return i, ""
		}
	}
	return -1, fmt.Sprintf("condition %q is neither a number nor a state of scale %q (%s)", t, s.Name, stateList(s))
}
