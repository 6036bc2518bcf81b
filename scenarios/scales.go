package scenarios

import (
	"errors"
	"fmt"
	"io/fs"
	"math"
	"reflect"
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
	fsys, name, err := openScenarioFolder(path)
	if err != nil {
		return nil, err
	}
	defer fsys.Close()
	data, err := readInput(fsys, name, MaxFileSize, nil)
	if err != nil {
		msg := describeOpenError(err)
		if errors.Is(err, fs.ErrNotExist) {
			msg = "file not found; check the path"
		}
		return nil, &InputError{Issues: []*Issue{{File: printable(path), Msg: msg}}}
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

// ParseCondition reads a condition as written in a data file: an index
// value placed with StateOf, or the name of a state (case and surrounding
// spaces ignored), as inventory lists are read. It returns the state and a
// message saying what is wrong when it cannot. Numbers are read with
// decimal points.
func (s *Scale) ParseCondition(text string) (int, string) {
	return s.parseCondition(text, csvFormat{})
}

// parseCondition is ParseCondition with the number format of a file.
func (s *Scale) parseCondition(text string, f csvFormat) (int, string) {
	t := strings.TrimSpace(text)
	if t == "" {
		return -1, "condition is empty; give an index value or a state name"
	}
	i, v, err := conditionOf(s, t, f)
	switch {
	case i >= 0:
		return i, ""
	case !math.IsNaN(v):
		lo, hi := math.Min(s.Best, s.Worst), math.Max(s.Best, s.Worst)
		return -1, fmt.Sprintf("condition %s is outside scale %q (%s to %s); check the value or the class's scale", t, s.Name, num(lo), num(hi))
	case errors.Is(err, errDecimalComma) || errors.Is(err, errDecimalPoint):
		return -1, fmt.Sprintf("condition %q is not a number; %s", t, f.numberHint(err))
	}
	return -1, fmt.Sprintf("condition %q is neither a number nor a state of scale %q (%s)", t, s.Name, stateList(s))
}
