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
	// Bases names the files of the extends chain after the file itself,
	// relative to its folder: inputs too, which an output must not replace.
	Bases []string
}

// LoadScaleSet reads the condition scales of a scenario, or of a file that
// holds only scales: (same syntax), exactly as loading the scenario would:
// through its extends chain, with the scales written under scales:
// (presets among them) and the presets classes name directly (scale:
// preset:NAME), each class mapped to its scale. The file is parsed
// strictly, but nothing else in it is checked: a scenario whose fit files
// do not exist yet still gives its scales. Files are named in messages as
// LoadFile names them, relative to the file's folder.
func LoadScaleSet(path string) (*ScaleSet, error) {
	fsys, name, err := openScenarioFolder(path)
	if err != nil {
		return nil, err
	}
	defer fsys.Close()
	set, err := loadScaleSet(fsys, name)
	if err != nil {
		return nil, err
	}
	set.Source = path
	return set, nil
}

func loadScaleSet(fsys fs.FS, name string) (*ScaleSet, error) {
	data, err := readInput(fsys, name, MaxFileSize, nil)
	if err != nil {
		msg := describeOpenError(err)
		if errors.Is(err, fs.ErrNotExist) {
			msg = "file not found; check the path"
		}
		return nil, &InputError{Issues: []*Issue{{File: printable(name), Msg: msg}}}
	}
	root, files, err := loadChain(inputSource{fsys: fsys, name: name, digests: map[string]string{}}, name, data)
	if err != nil {
		return nil, err
	}
	is := &issues{file: name, files: files}
	var f fileScenario
	d := &decoder{issues: is}
	d.decode(root, reflect.ValueOf(&f).Elem(), "")
	if err := is.err(); err != nil {
		return nil, err
	}
	scales, classScale := classScales(&f, is)
	set := &ScaleSet{Source: name, Scales: scales, ClassScale: map[string]string{}, Bases: files[1:]}
	for k, c := range f.Classes {
		name := strings.TrimSpace(c.Name)
		if name == "" || classScale[k] == nil {
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

// classScales builds the file's scales (buildScales) and looks up each
// class's: the one place where a class's scale key is resolved, for
// scenarios (buildClasses) and for the scales of a fit alike. An unknown
// scale is reported against the class.
func classScales(f *fileScenario, is *issues) (map[string]*Scale, []*Scale) {
	scales := buildScales(f, is)
	out := make([]*Scale, len(f.Classes))
	for k := range f.Classes {
		fc := &f.Classes[k]
		field := fmt.Sprintf("classes[%d]", k)
		if name := strings.TrimSpace(fc.Name); name != "" {
			field = fmt.Sprintf("classes[%d] (%s)", k, name)
		}
		out[k] = scales[fc.Scale]
		if fc.Scale == "" {
			is.add(fc.Lines.of(""), field+".scale", "missing; name one of the scales defined under scales")
		} else if out[k] == nil {
			if _, defined := f.Scales[fc.Scale]; !defined && !strings.HasPrefix(fc.Scale, PresetPrefix) {
				is.add(fc.Lines.of("scale"), field+".scale", "unknown scale %q; define it under scales, or name a preset (%s%s)", fc.Scale, PresetPrefix, strings.ReplaceAll(presetNames(), ", ", ", "+PresetPrefix))
			}
		}
	}
	return scales, out
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

// PresetScale returns a built-in scale by its name in a class's scale key
// (preset:NAME), built as a scenario builds it.
func PresetScale(name string) (*Scale, error) {
	p, ok := strings.CutPrefix(name, PresetPrefix)
	if !ok {
		return nil, fmt.Errorf("%q is not a preset name; write %sNAME, one of %s", name, PresetPrefix, presetNames())
	}
	is := &issues{}
	s := buildPreset(name, p, 0, nil, "scale", is)
	if s == nil {
		return nil, fmt.Errorf("unknown preset %q; presets are %s", p, presetNames())
	}
	return s, nil
}
