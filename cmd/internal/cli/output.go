package cli

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math/rand/v2"
	"os"
	"os/signal"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"syscall"

	"github.com/spf13/cobra"

	"wearplan/scenarios"
)

// Output files are written whole or not at all:
//
//   - one file (--out FILE, --save, --write-model) is written to a
//     temporary file beside it and renamed into place;
//   - a set of files (--format csv --out DIR) is written to a temporary
//     folder and moved into place as a whole: into a new folder by one
//     rename, into an existing one file by file under a lock that a signal
//     waits for, the files it replaces kept until every new one is in
//     place (and put back if one cannot be), so that a full disk or an
//     interrupted run leaves the old set as it was;
//   - temporary files and folders are removed on every exit path,
//     SIGINT, SIGTERM and SIGHUP included; after SIGKILL they are removed
//     by the next run that writes into the same folder (their names start
//     with .wearplan-partial- and carry the process id);
//   - a file that replaces another keeps its permissions (and, for root,
//     its owner); a new file gets 0666 less the umask, like any program's;
//   - --out never replaces a file the run read (the scenario, its bases,
//     segment lists, fit files, inspection exports) unless --force;
//   - a symbolic link at the target is refused (wearplan does not write
//     through links; name the file they lead to); so are folders, pipes
//     and devices where a file is to be written;
//   - --format csv --out DIR creates the folder DIR when it does not exist
//     (its parent must), and never writes a file in its place.

// partialPrefix starts the name of every temporary file and folder.
const partialPrefix = ".wearplan-partial-"

// outputs writes the files of one run and tracks what must be removed
// if the run is stopped.
type outputs struct {
	mu sync.Mutex
	// temps are the temporary files and folders in use.
	temps map[string]bool
	// inputs are the files the run read; force lets --out replace them.
	inputs []input
	force  bool
	umask  fs.FileMode
	stop   func()
}

// input is a file the run read, and what it was.
type input struct {
	path, what string
}

type outputsKey struct{}

func newOutputs() *outputs {
	// The umask can only be read by setting it; put it straight back.
	u := syscall.Umask(0o022)
	syscall.Umask(u)
	return &outputs{temps: map[string]bool{}, umask: fs.FileMode(u)}
}

// withOutputs returns ctx carrying o.
func withOutputs(ctx context.Context, o *outputs) context.Context {
	return context.WithValue(ctx, outputsKey{}, o)
}

// outputsOf returns the run's outputs (a fresh one when a command runs
// on its own, as in tests), with the command's --force.
func outputsOf(cmd *cobra.Command) *outputs {
	var o *outputs
	if ctx := cmd.Context(); ctx != nil {
		o, _ = ctx.Value(outputsKey{}).(*outputs)
	}
	if o == nil {
		o = newOutputs()
		cmd.SetContext(withOutputs(cmd.Context(), o))
	}
	if f := cmd.Flags().Lookup("force"); f != nil {
		o.force = f.Value.String() == "true"
	}
	return o
}

// watchSignals removes the temporary files and exits on SIGINT, SIGTERM
// or SIGHUP, saying so on stderr. A commit in progress finishes first.
func (o *outputs) watchSignals(stderr io.Writer) {
	ch := make(chan os.Signal, 1)
	signal.Notify(ch, os.Interrupt, syscall.SIGTERM, syscall.SIGHUP)
	done := make(chan struct{})
	o.stop = func() {
		signal.Stop(ch)
		close(done)
	}
	go func() {
		select {
		case sig := <-ch:
			o.mu.Lock() // held until exit: no commit starts after this
			for p := range o.temps {
				os.RemoveAll(p)
			}
			fmt.Fprintf(stderr, "wearplan: stopped by %v; no partial output left behind\n", sig)
			code := 128 + int(syscall.SIGINT)
			if s, ok := sig.(syscall.Signal); ok {
				code = 128 + int(s)
			}
			os.Exit(code)
		case <-done:
		}
	}()
}

// unwatch stops watching signals: for commands that handle them
// themselves (serve) or at the end of the run.
func (o *outputs) unwatch() {
	if o.stop != nil {
		o.stop()
		o.stop = nil
	}
}

// read notes a file the run read; what names it in a refusal ("the
// scenario", "a segment list").
func (o *outputs) read(path, what string) {
	o.inputs = append(o.inputs, input{path, what})
}

// readScenario notes every file a scenario was read from.
func (o *outputs) readScenario(path string, sc *scenarios.Scenario) {
	dir := folderOf(path)
	for i, in := range sc.Inputs {
		what := "a file the scenario names"
		if i == 0 {
			what = "the scenario"
		}
		o.read(filepath.Join(dir, filepath.FromSlash(in.Name)), what)
	}
}

// folderOf is the folder the files a file names are relative to: that of
// the file a symbolic link at path leads to.
func folderOf(path string) string {
	if real, err := filepath.EvalSymlinks(path); err == nil {
		return filepath.Dir(real)
	}
	return filepath.Dir(path)
}

// outputError is a refusal to write: a usage error (exit 2) naming the
// target and what to do.
func outputError(format string, args ...any) error { return usageError(format, args...) }

// checkTarget says whether path may be written as a file: not a link,
// not a folder or special file, not an input (unless --force), in an
// existing folder. It returns the target's current state (nil when new).
func (o *outputs) checkTarget(path, flag string) (fs.FileInfo, error) {
	st, err := os.Lstat(path)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		dir := filepath.Dir(path)
		if ds, err := os.Stat(dir); err != nil || !ds.IsDir() {
			return nil, outputError("%s %s: the folder %s does not exist; create it first (mkdir -p %s)", flag, path, dir, dir)
		}
		return nil, nil
	case err != nil:
		return nil, &exitError{code: exitFailure, err: fmt.Errorf("cannot write %s: %w", path, err)}
	case st.Mode()&fs.ModeSymlink != 0:
		to, _ := os.Readlink(path)
		return nil, outputError("%s %s is a symbolic link (to %s); wearplan does not write through links: name the file itself, or remove the link", flag, path, to)
	case st.IsDir():
		return nil, outputError("%s %s is a folder; name a file (in it, or elsewhere)", flag, path)
	case !st.Mode().IsRegular():
		return nil, outputError("%s %s is not a regular file (%v); name a file", flag, path, st.Mode().Type())
	}
	if !o.force {
		for _, in := range o.inputs {
			if is, err := os.Stat(in.path); err == nil && os.SameFile(st, is) {
				return nil, outputError("%s %s is an input of this run (%s: %s); writing there would destroy it: name another file, or add --force", flag, path, in.what, in.path)
			}
		}
	}
	return st, nil
}

// file writes path whole or not at all with fill.
func (o *outputs) file(path, flag string, fill func(io.Writer) error) error {
	old, err := o.checkTarget(path, flag)
	if err != nil {
		return err
	}
	dir := filepath.Dir(path)
	o.sweep(dir)
	tmp, err := o.createTemp(dir, filepath.Base(path))
	if err != nil {
		return writeError(path, err)
	}
	defer o.discard(tmp.Name())
	if err := fillBuffered(tmp, fill); err != nil {
		tmp.Close()
		return writeError(path, err)
	}
	if err := o.settle(tmp, old); err != nil {
		tmp.Close()
		return writeError(path, err)
	}
	if err := tmp.Close(); err != nil {
		return writeError(path, err)
	}
	o.mu.Lock()
	defer o.mu.Unlock()
	if err := os.Rename(tmp.Name(), path); err != nil {
		return writeError(path, err)
	}
	delete(o.temps, tmp.Name())
	return nil
}

// writeError says a file could not be written and that nothing changed.
func writeError(path string, err error) error {
	var ee *exitError
	if errors.As(err, &ee) {
		return err
	}
	return &exitError{code: exitFailure, err: fmt.Errorf("cannot write %s: %w; nothing was changed", path, err)}
}

// createTemp creates a temporary file in dir for a file named base.
func (o *outputs) createTemp(dir, base string) (*os.File, error) {
	o.mu.Lock()
	defer o.mu.Unlock()
	for range 100 {
		name := filepath.Join(dir, fmt.Sprintf("%s%d-%d-%s", partialPrefix, os.Getpid(), rand.Uint32(), base))
		f, err := os.OpenFile(name, os.O_RDWR|os.O_CREATE|os.O_EXCL, 0o600)
		if errors.Is(err, fs.ErrExist) {
			continue
		}
		if err == nil {
			o.temps[name] = true
		}
		return f, err
	}
	return nil, errors.New("cannot find a free temporary name")
}

// discard removes a temporary file or folder unless it was moved into
// place.
func (o *outputs) discard(name string) {
	o.mu.Lock()
	defer o.mu.Unlock()
	if o.temps[name] {
		os.RemoveAll(name)
		delete(o.temps, name)
	}
}

// settle gives a finished temporary file the mode (and, for root, the
// owner) of the file it replaces, or a new file's mode.
func (o *outputs) settle(tmp *os.File, old fs.FileInfo) error {
	mode := 0o666 &^ o.umask
	if old != nil {
		mode = old.Mode().Perm()
		if st, ok := old.Sys().(*syscall.Stat_t); ok && os.Geteuid() == 0 {
			_ = tmp.Chown(int(st.Uid), int(st.Gid))
		}
	}
	return tmp.Chmod(mode)
}

// sweep removes what runs killed with SIGKILL left in dir: temporary
// files and folders of processes that no longer run.
func (o *outputs) sweep(dir string) {
	entries, err := os.ReadDir(dir)
	if err != nil {
		return
	}
	for _, e := range entries {
		rest, ok := strings.CutPrefix(e.Name(), partialPrefix)
		if !ok {
			continue
		}
		pidText, _, _ := strings.Cut(rest, "-")
		pid, err := strconv.Atoi(pidText)
		if err != nil || pid <= 0 || pid == os.Getpid() {
			continue
		}
		if err := syscall.Kill(pid, 0); errors.Is(err, syscall.ESRCH) {
			os.RemoveAll(filepath.Join(dir, e.Name()))
		}
	}
}

// setFile is one file of a set: its name in the folder and its writer.
type setFile struct {
	name string
	fill func(io.Writer) error
}

// set writes the files into the folder dir as a whole or not at all,
// creating dir when it does not exist.
func (o *outputs) set(dir, flag string, files []setFile) error {
	dir = filepath.Clean(dir)
	st, err := os.Stat(dir)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return o.newSet(dir, flag, files)
	case err != nil:
		return &exitError{code: exitFailure, err: fmt.Errorf("cannot write to %s: %w", dir, err)}
	case !st.IsDir():
		return outputError("%s %s is a file, not a folder; name a folder for every table, or a file ending in .csv for one table (--table)", flag, dir)
	}
	olds := make([]fs.FileInfo, len(files))
	for i, f := range files {
		if olds[i], err = o.checkTarget(filepath.Join(dir, f.name), flag); err != nil {
			return err
		}
	}
	o.sweep(dir)
	tmp, err := o.fillTemp(dir, filepath.Base(dir), files, olds)
	if err != nil {
		return writeError(dir, err)
	}
	defer o.discard(tmp)
	o.mu.Lock()
	defer o.mu.Unlock()
	return commitSet(tmp, dir, files)
}

// newSet writes the files into a new folder dir: a temporary folder
// beside it, filled and renamed to dir.
func (o *outputs) newSet(dir, flag string, files []setFile) error {
	parent := filepath.Dir(dir)
	if ps, err := os.Stat(parent); err != nil || !ps.IsDir() {
		return outputError("%s %s: the folder %s does not exist; create it first (mkdir -p %s)", flag, dir, parent, parent)
	}
	o.sweep(parent)
	tmp, err := o.fillTemp(parent, filepath.Base(dir), files, make([]fs.FileInfo, len(files)))
	if err != nil {
		return writeError(dir, err)
	}
	defer o.discard(tmp)
	if err := os.Chmod(tmp, fs.ModeDir|(0o777&^o.umask)); err != nil {
		return writeError(dir, err)
	}
	o.mu.Lock()
	defer o.mu.Unlock()
	if err := os.Rename(tmp, dir); err != nil {
		return writeError(dir, err)
	}
	delete(o.temps, tmp)
	return nil
}

// fillTemp makes a temporary folder in dir and writes the files into it.
func (o *outputs) fillTemp(dir, base string, files []setFile, olds []fs.FileInfo) (string, error) {
	o.mu.Lock()
	tmp, err := os.MkdirTemp(dir, fmt.Sprintf("%s%d-*-%s", partialPrefix, os.Getpid(), base))
	if err == nil {
		o.temps[tmp] = true
	}
	o.mu.Unlock()
	if err != nil {
		return "", err
	}
	for i, f := range files {
		if err := o.fillOne(filepath.Join(tmp, f.name), f.fill, olds[i]); err != nil {
			o.discard(tmp)
			return "", err
		}
	}
	return tmp, nil
}

func (o *outputs) fillOne(path string, fill func(io.Writer) error, old fs.FileInfo) error {
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE|os.O_EXCL, 0o600)
	if err != nil {
		return err
	}
	if err := fillBuffered(f, fill); err != nil {
		f.Close()
		return err
	}
	if err := o.settle(f, old); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// fillBuffered writes f with fill through a buffer, so that a renderer's
// rows do not each cost a system call.
func fillBuffered(f *os.File, fill func(io.Writer) error) error {
	w := bufio.NewWriterSize(f, outputBuffer)
	if err := fill(w); err != nil {
		return err
	}
	return w.Flush()
}

// commitSet moves the files from tmp into dir. Files they replace are
// first linked into tmp (.old-NAME), so that if one move fails the ones
// done are undone and the set stays as it was.
func commitSet(tmp, dir string, files []setFile) error {
	type done struct {
		name   string
		backup string // "" when the file was new
	}
	var moved []done
	undo := func() {
		for i := len(moved) - 1; i >= 0; i-- {
			target := filepath.Join(dir, moved[i].name)
			if moved[i].backup == "" {
				os.Remove(target)
			} else {
				os.Rename(moved[i].backup, target)
			}
		}
	}
	for _, f := range files {
		target := filepath.Join(dir, f.name)
		d := done{name: f.name}
		if _, err := os.Lstat(target); err == nil {
			d.backup = filepath.Join(tmp, ".old-"+f.name)
			// A link keeps the old file in place until the new one
			// replaces it; where links are not supported, move it aside.
			if err := os.Link(target, d.backup); err != nil {
				if err := os.Rename(target, d.backup); err != nil {
					undo()
					return writeError(dir, err)
				}
			}
		}
		if err := os.Rename(filepath.Join(tmp, f.name), target); err != nil {
			undo()
			return writeError(dir, err)
		}
		moved = append(moved, d)
	}
	return nil
}

// isSetTarget says whether --format csv --out path names a folder (every
// table) rather than one table's file: a path ending in .csv is a file.
func isSetTarget(path string) bool {
	if strings.HasSuffix(path, "/") || strings.HasSuffix(path, string(filepath.Separator)) {
		return true
	}
	if st, err := os.Stat(path); err == nil && st.IsDir() {
		return true
	}
	return !strings.EqualFold(filepath.Ext(path), ".csv")
}
