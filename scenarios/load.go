package scenarios

import (
	"bytes"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"sync"
	"unicode/utf8"

	"gopkg.in/yaml.v3"
)

// MaxFileSize bounds a scenario file; anything larger is not a scenario.
const MaxFileSize = 8 << 20

// LoadFile reads and validates a scenario file from disk. Files it refers
// to are looked up in the scenario's own folder (the folder of the file a
// symbolic link given as path leads to) and must lie inside it.
func LoadFile(path string) (*Scenario, error) {
	return LoadFileWith(path, LoadOptions{})
}

// LoadOptions say what of a scenario's segment lists to keep in memory.
// The zero value keeps everything.
type LoadOptions struct {
	// CountSegments reads segment lists for their totals only (checked
	// row by row as always): Class.Segments stays nil, and memory does
	// not grow with the number of rows. For commands that do not list
	// or simulate segments.
	CountSegments bool
	// NoGeometry leaves out the segments' WKT and lon/lat (still checked),
	// for commands that draw no map.
	NoGeometry bool
}

// LoadFileWith is LoadFile with options.
func LoadFileWith(path string, opt LoadOptions) (*Scenario, error) {
	fsys, name, err := openScenarioFolder(path)
	if err != nil {
		return nil, err
	}
	defer fsys.Close()
	sc, _, _, err := load(fsys, name, opt)
	return sc, err
}

// openScenarioFolder opens the folder of the file at path that the user
// named (a scenario, an inspection export), after following a symbolic
// link at path itself, and returns the file's name inside it. A path that
// is not a regular file is refused here, with the path as given.
func openScenarioFolder(path string) (*folderFS, string, error) {
	real, err := filepath.EvalSymlinks(path)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return nil, "", &InputError{Issues: []*Issue{{File: printable(path), Msg: "file not found; check the path"}}}
		}
		return nil, "", &InputError{Issues: []*Issue{{File: printable(path), Msg: fmt.Sprintf("cannot be read: %v", err)}}}
	}
	// The file itself is checked here, so that messages name it as given.
	if st, err := os.Stat(real); err == nil && !st.Mode().IsRegular() {
		return nil, "", &InputError{Issues: []*Issue{{File: printable(path), Msg: (&inputError{err: errNotRegular, detail: kindOf(st.Mode())}).describe()}}}
	}
	fsys, err := openFolder(filepath.Dir(real))
	if err != nil {
		return nil, "", &InputError{Issues: []*Issue{{File: printable(path), Msg: fmt.Sprintf("cannot open its folder: %v", err)}}}
	}
	return fsys, filepath.Base(real), nil
}

// Load reads and validates the scenario name from fsys.
func Load(fsys fs.FS, name string) (*Scenario, error) {
	sc, _, _, err := load(fsys, name, LoadOptions{})
	return sc, err
}

// load reads and validates a scenario, and also returns its merged node
// tree and the files of its extends chain (kept by LoadEditable).
func load(fsys fs.FS, name string, opt LoadOptions) (*Scenario, *yaml.Node, []string, error) {
	src := inputSource{fsys: fsys, name: name, digests: map[string]string{}, opt: opt}
	data, err := readInput(fsys, name, MaxFileSize, src.digests)
	if err != nil {
		msg := describeOpenError(err)
		if errors.Is(err, fs.ErrNotExist) {
			msg = "file not found; check the path"
		}
		return nil, nil, nil, &InputError{Issues: []*Issue{{File: printable(name), Msg: msg}}}
	}
	root, files, err := loadChain(src, name, data)
	if err != nil {
		return nil, nil, nil, err
	}
	sc, read, err := decodeScenario(src, root, files)
	if err != nil {
		return nil, nil, nil, err
	}
	// Digests of every file read (the scenario, its bases and the data
	// files they name), so reports can show exactly which inputs produced
	// them; taken while the files were read.
	for _, f := range append(files, read...) {
		sum, ok := src.digests[f]
		if !ok {
			if sum, err = fileDigest(fsys, f); err != nil {
				return nil, nil, nil, &InputError{Issues: []*Issue{{File: f, Msg: describeOpenError(err)}}}
			}
		}
		sc.Inputs = append(sc.Inputs, InputFile{Name: f, SHA256: sum})
	}
	return sc, root, files, nil
}

// yamlLine finds the line in a YAML syntax error; compiled on first use.
var yamlLine = sync.OnceValue(func() *regexp.Regexp { return regexp.MustCompile(`line (\d+)`) })

// parseNode reads YAML text into a node tree, turning syntax errors into an
// Issue with the line yaml.v3 reports.
func parseNode(name string, data []byte) (*yaml.Node, error) {
	is := &issues{file: name}
	if len(data) > MaxFileSize {
		is.add(0, "", "file is %d bytes; a scenario file is at most %d", len(data), MaxFileSize)
		return nil, is.err()
	}
	if !utf8.Valid(data) {
		is.add(0, "", "file is not UTF-8 text; save it as UTF-8")
		return nil, is.err()
	}
	var doc yaml.Node
	dec := yaml.NewDecoder(bytes.NewReader(data))
	if err := dec.Decode(&doc); err != nil {
		msg := strings.TrimPrefix(err.Error(), "yaml: ")
		line := 0
		if m := yamlLine().FindStringSubmatch(msg); m != nil {
			line, _ = strconv.Atoi(m[1])
			msg = strings.TrimSpace(strings.TrimPrefix(msg, m[0]+":"))
		}
		if err.Error() == "EOF" {
			msg = "file is empty; start from a scenario in scenarios/examples/"
		} else {
			msg = "YAML syntax error: " + msg + "; check indentation and that every key is followed by a colon"
		}
		is.add(line, "", "%s", msg)
		return nil, is.err()
	}
	var extra yaml.Node
	if err := dec.Decode(&extra); err == nil {
		is.add(extra.Line, "", "the file holds a second YAML document (after ---); keep one scenario per file")
		return nil, is.err()
	}
	root := resolve(&doc)
	if root.Kind == yaml.DocumentNode && len(root.Content) > 0 {
		root = resolve(root.Content[0])
	}
	if root.Kind != yaml.MappingNode {
		is.add(root.Line, "", "want a scenario (key: value lines such as name:, horizon:, classes:), got %s", kindName(root))
		return nil, is.err()
	}
	// Anchors and aliases (&name, *name) let a few lines stand for millions
	// of values, which the strict decoder would walk one by one, and a long
	// text anchored once could be quoted in a message for each of its uses.
	// What the file expands to is bounded twice: in values (nodes) and in
	// bytes of text (no more than a scenario file may hold).
	written, aliasLine := writtenNodes(&doc)
	b := expansion{nodes: 10*written + 100_000, bytes: MaxFileSize, memo: map[*yaml.Node]size{}}
	if got := b.size(&doc); got.nodes > b.nodes || got.bytes > b.bytes {
		is.add(aliasLine, "", "anchors and aliases (&name, *name) expand this file to more than %d values or %d bytes of text, or an alias refers to itself; write the repeated parts out", b.nodes, b.bytes)
		return nil, is.err()
	}
	return root, nil
}

// writtenNodes counts the nodes as written, aliases not followed, and
// returns the line of the first alias.
func writtenNodes(n *yaml.Node) (count, aliasLine int) {
	count = 1
	if n.Kind == yaml.AliasNode {
		return 1, n.Line
	}
	for _, c := range n.Content {
		k, l := writtenNodes(c)
		count += k
		if aliasLine == 0 {
			aliasLine = l
		}
	}
	return count, aliasLine
}

// size is what a node expands to: values, and bytes of keys and values.
type size struct{ nodes, bytes int }

// expansion measures a node tree with aliases followed, stopping past its
// bounds; an anchor's size is worked out once (memo).
type expansion struct {
	nodes, bytes int
	memo         map[*yaml.Node]size
}

func (e *expansion) past(s size) bool { return s.nodes > e.nodes || s.bytes > e.bytes }

// size returns the expanded size of n, or a size past the bounds. An
// alias inside its own anchor counts as past them.
func (e *expansion) size(n *yaml.Node) size {
	over := size{e.nodes + 1, e.bytes + 1}
	if n.Kind == yaml.AliasNode && n.Alias != nil {
		if v, ok := e.memo[n.Alias]; ok {
			return v
		}
		e.memo[n.Alias] = over
		v := e.size(n.Alias)
		e.memo[n.Alias] = v
		return v
	}
	total := size{1, len(n.Value)}
	for _, c := range n.Content {
		s := e.size(c)
		total.nodes += s.nodes
		total.bytes += s.bytes
		if e.past(total) {
			return over
		}
	}
	return total
}

// Parse validates a scenario held in memory; name is used in messages.
// It has no folder, so it cannot extend a base or read the files a scenario
// may name (inventory_csv, fit files): use Load or LoadFile for those.
func Parse(name string, data []byte) (*Scenario, error) {
	root, err := parseNode(name, data)
	if err != nil {
		return nil, err
	}
	if ext, line := extendsOf(root); ext != "" {
		is := &issues{file: name}
		is.add(line, "extends", "a scenario read from memory cannot extend %q; load it from its folder (LoadFile)", ext)
		return nil, is.err()
	}
	sc, _, err := decodeScenario(inputSource{name: name}, root, nil)
	return sc, err
}

// decodeScenario decodes and checks a (merged) scenario node tree; the data
// files it names (fit files, inventory CSVs) are read from src and returned,
// in first-use order.
func decodeScenario(src inputSource, root *yaml.Node, files []string) (*Scenario, []string, error) {
	name, fsys := src.name, src.fsys
	is := &issues{file: name, files: files}
	var f fileScenario
	d := &decoder{issues: is}
	d.decode(root, reflect.ValueOf(&f).Elem(), "")
	if is.count() > 0 {
		// Shapes are wrong: checking meaning now would repeat the same
		// problems in vaguer words.
		return nil, nil, is.err()
	}
	// Fit files stand in for inline matrices; a problem with one would
	// otherwise also read as a missing matrix.
	read := resolveFits(&f, fsys, is)
	if is.count() > 0 {
		return nil, nil, is.err()
	}
	f.source = src
	sc := build(&f, is)
	if err := is.err(); err != nil {
		return nil, nil, err
	}
	sc.Source = name
	for _, inv := range sc.Inventories {
		if !slices.Contains(read, inv.File) {
			read = append(read, inv.File)
		}
	}
	return sc, read, nil
}
