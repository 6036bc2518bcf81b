package cli

import (
	"bufio"
	"bytes"
	"crypto/sha256"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
	"testing"
	"time"
)

// The test binary doubles as a child process for tests that must kill or
// measure a run: with childEnv set it runs what the variable names
// instead of the tests.
const childEnv = "WEARPLAN_TEST_CHILD"

func TestMain(m *testing.M) {
	switch os.Getenv(childEnv) {
	case "main":
		os.Exit(Main(os.Args[1:], os.Stdout, os.Stderr))
	case "slow-write":
		os.Exit(slowWrite(os.Args[1], os.Args[2]))
	}
	os.Exit(m.Run())
}

// slowWrite writes a large file (kind "file") or a set of two (kind
// "set") at target, says "ready" on stdout half way through, and waits
// there to be stopped by a signal.
func slowWrite(kind, target string) int {
	outs := newOutputs()
	outs.watchSignals(os.Stderr)
	fill := func(w io.Writer) error {
		chunk := bytes.Repeat([]byte("0123456789abcdef"), 1<<16) // 1 MiB
		for range 8 {
			if _, err := w.Write(chunk); err != nil {
				return err
			}
		}
		fmt.Println("ready")
		time.Sleep(time.Minute)
		return nil
	}
	var err error
	if kind == "set" {
		err = outs.set(target, "--out", []setFile{{"small.csv", func(w io.Writer) error { _, err := io.WriteString(w, "a\n"); return err }}, {"large.csv", fill}})
	} else {
		err = outs.file(target, "--out", fill)
	}
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	return 0
}

// child returns a command that runs the test binary as a child (see
// TestMain).
func child(t *testing.T, kind string, args ...string) *exec.Cmd {
	t.Helper()
	exe, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(exe, args...)
	cmd.Env = append(os.Environ(), childEnv+"="+kind)
	return cmd
}

// listing returns the names in dir (hidden ones included) with their
// contents, for "nothing changed" checks.
func listing(t *testing.T, dir string) map[string]string {
	t.Helper()
	out := map[string]string{}
	err := filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(dir, p)
		switch {
		case d.Type()&fs.ModeSymlink != 0:
			to, _ := os.Readlink(p)
			out[rel] = "link to " + to
		case d.Type().IsRegular():
			out[rel], err = fileState(p)
			if err != nil {
				return err
			}
		case d.IsDir():
			out[rel+"/"] = ""
		default:
			out[rel] = d.Type().String()
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// fileState is a file's content, or for a large file its size, time and
// digest, so that listing a folder with a 2 GiB file takes little memory.
func fileState(path string) (string, error) {
	st, err := os.Stat(path)
	if err != nil {
		return "", err
	}
	if st.Size() <= 1<<20 {
		b, err := os.ReadFile(path)
		return string(b), err
	}
	f, err := os.Open(path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	h := sha256.New()
	if st.Size() <= 256<<20 {
		if _, err := io.Copy(h, f); err != nil {
			return "", err
		}
	}
	return fmt.Sprintf("%d bytes, %v, %x", st.Size(), st.ModTime(), h.Sum(nil)), nil
}

func sameListing(t *testing.T, before, after map[string]string) {
	t.Helper()
	for name, v := range before {
		if w, ok := after[name]; !ok {
			t.Errorf("%s is gone", name)
		} else if w != v {
			t.Errorf("%s changed", name)
		}
	}
	for name := range after {
		if _, ok := before[name]; !ok {
			t.Errorf("%s appeared", name)
		}
	}
}

// failAfter is a writer that fails with ENOSPC after n bytes, as a full
// disk does.
type failAfter struct {
	w io.Writer
	n int
}

func (f *failAfter) Write(p []byte) (int, error) {
	if len(p) > f.n {
		k, _ := f.w.Write(p[:f.n])
		f.n = 0
		return k, &fs.PathError{Op: "write", Path: "table", Err: syscall.ENOSPC}
	}
	f.n -= len(p)
	return f.w.Write(p)
}

// oldSet writes the tables a previous run left in dir.
func oldSet(t *testing.T, dir string) {
	t.Helper()
	for _, name := range []string{"work.csv", "spend.csv", "value.csv"} {
		if err := os.WriteFile(filepath.Join(dir, name), []byte("old "+name+"\n"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

func tablesOf(sizes map[string]int) []setFile {
	var files []setFile
	for _, name := range []string{"work.csv", "spend.csv", "value.csv"} {
		files = append(files, setFile{name: name, fill: func(w io.Writer) error {
			_, err := w.Write(bytes.Repeat([]byte("n"), sizes[name]))
			return err
		}})
	}
	return files
}

func TestOutputSetFullDisk(t *testing.T) {
	// A set that cannot be written whole changes nothing: the old tables
	// stay, side by side, and no temporary file is left.
	t.Run("writer that fails after N bytes", func(t *testing.T) {
		dir := t.TempDir()
		oldSet(t, dir)
		before := listing(t, dir)
		files := tablesOf(map[string]int{"work.csv": 10, "spend.csv": 10, "value.csv": 10})
		// The third table meets a full disk after 4 bytes.
		third := files[2].fill
		files[2].fill = func(w io.Writer) error { return third(&failAfter{w: w, n: 4}) }
		err := newOutputs().set(dir, "--out", files)
		if err == nil || !errors.Is(err, syscall.ENOSPC) || !strings.Contains(err.Error(), "nothing was changed") {
			t.Fatalf("err = %v, want no space left and nothing changed", err)
		}
		sameListing(t, before, listing(t, dir))
	})
	t.Run("small tmpfs", func(t *testing.T) {
		dir := t.TempDir()
		// Linux's tmpfs with a size limit is a real full disk; mounting
		// needs root (or a user namespace) and is skipped without it.
		if out, err := exec.Command("mount", "-t", "tmpfs", "-o", "size=64k", "tmpfs", dir).CombinedOutput(); err != nil {
			t.Skipf("cannot mount a tmpfs here (%v: %s); the writer above stands in", err, bytes.TrimSpace(out))
		}
		defer exec.Command("umount", dir).Run()
		oldSet(t, dir)
		before := listing(t, dir)
		err := newOutputs().set(dir, "--out", tablesOf(map[string]int{"work.csv": 40 << 10, "spend.csv": 40 << 10, "value.csv": 10}))
		if err == nil || !errors.Is(err, syscall.ENOSPC) {
			t.Fatalf("err = %v, want no space left on device", err)
		}
		sameListing(t, before, listing(t, dir))
		// With room, the same set replaces the old one whole.
		if err := newOutputs().set(dir, "--out", tablesOf(map[string]int{"work.csv": 10 << 10, "spend.csv": 10, "value.csv": 10})); err != nil {
			t.Fatal(err)
		}
		if b, _ := os.ReadFile(filepath.Join(dir, "work.csv")); len(b) != 10<<10 {
			t.Errorf("work.csv has %d bytes after the second write", len(b))
		}
	})
}

func TestOutputRollsBackAFailedMove(t *testing.T) {
	// If one file of a set cannot be moved into place, the files moved
	// before it are put back as they were.
	dir := t.TempDir()
	oldSet(t, dir)
	before := listing(t, dir)
	tmp := t.TempDir()
	for _, name := range []string{"work.csv", "spend.csv"} {
		os.WriteFile(filepath.Join(tmp, name), []byte("new"), 0o644)
	}
	// value.csv is missing from the temporary folder: its move fails.
	err := commitSet(tmp, dir, tablesOf(nil))
	if err == nil {
		t.Fatal("commit succeeded without value.csv")
	}
	sameListing(t, before, listing(t, dir))
}

func TestOutputInterrupted(t *testing.T) {
	// SIGINT during a large write: the run exits 130 (128 + SIGINT, the
	// shell convention), the target is as it was and no temporary file is
	// left, for one file and for a set.
	for _, kind := range []string{"file", "set"} {
		t.Run(kind, func(t *testing.T) {
			dir := t.TempDir()
			target := filepath.Join(dir, "plan.json")
			if kind == "set" {
				target = filepath.Join(dir, "tables")
				os.Mkdir(target, 0o755)
				os.WriteFile(filepath.Join(target, "small.csv"), []byte("old\n"), 0o644)
			} else {
				os.WriteFile(target, []byte("old\n"), 0o644)
			}
			before := listing(t, dir)
			cmd := child(t, "slow-write", kind, target)
			stdout, err := cmd.StdoutPipe()
			if err != nil {
				t.Fatal(err)
			}
			var stderr bytes.Buffer
			cmd.Stderr = &stderr
			if err := cmd.Start(); err != nil {
				t.Fatal(err)
			}
			line, _ := bufio.NewReader(stdout).ReadString('\n')
			if line != "ready\n" {
				cmd.Process.Kill()
				t.Fatalf("child said %q: %s", line, stderr.String())
			}
			if err := cmd.Process.Signal(os.Interrupt); err != nil {
				t.Fatal(err)
			}
			err = cmd.Wait()
			var ee *exec.ExitError
			if !errors.As(err, &ee) || ee.ExitCode() != 130 {
				t.Errorf("exit %v, want 130; stderr: %s", err, stderr.String())
			}
			if !strings.Contains(stderr.String(), "no partial output left behind") {
				t.Errorf("stderr %q does not say what was done", stderr.String())
			}
			sameListing(t, before, listing(t, dir))
		})
	}
}

func TestOutputLeftoversOfKilledRunsAreSwept(t *testing.T) {
	// After SIGKILL nothing can clean up; the next run into the folder
	// removes temporary files whose process is gone, and leaves those of a
	// process still running (this one) alone.
	dir := t.TempDir()
	gone := exec.Command("true")
	if err := gone.Run(); err != nil {
		t.Skip("no true command")
	}
	dead := filepath.Join(dir, fmt.Sprintf("%s%d-1-plan.json", partialPrefix, gone.Process.Pid))
	alive := filepath.Join(dir, fmt.Sprintf("%s%d-1-other.json", partialPrefix, os.Getppid()))
	os.WriteFile(dead, []byte("half"), 0o600)
	os.WriteFile(alive, []byte("half"), 0o600)
	if err := newOutputs().file(filepath.Join(dir, "plan.json"), "--out", func(w io.Writer) error { _, err := io.WriteString(w, "{}\n"); return err }); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(dead); !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("the killed run's %s is still there", filepath.Base(dead))
	}
	if _, err := os.Stat(alive); err != nil {
		t.Errorf("a running process's temporary file was removed: %v", err)
	}
}

func TestOutputModeKept(t *testing.T) {
	dir := t.TempDir()
	target := filepath.Join(dir, "plan.json")
	os.WriteFile(target, []byte("old"), 0o600)
	os.Chmod(target, 0o600)
	code, _, errs := run(t, "plan", demo, "--format", "json", "--out", target)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	st, _ := os.Stat(target)
	if st.Mode().Perm() != 0o600 {
		t.Errorf("mode %v, want the target's 0600 kept", st.Mode().Perm())
	}
	// A new file gets 0666 less the umask, as files that programs create do.
	fresh := filepath.Join(dir, "fresh.json")
	if code, _, errs := run(t, "plan", demo, "--format", "json", "--out", fresh); code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	st, _ = os.Stat(fresh)
	if want := fs.FileMode(0o666) &^ newOutputs().umask; st.Mode().Perm() != want {
		t.Errorf("new file mode %v, want %v", st.Mode().Perm(), want)
	}
}

// scenarioCopy copies the demo scenario and its files into a folder of
// its own and returns the scenario's path there.
func scenarioCopy(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	src := filepath.Dir(demo)
	for _, name := range []string{"marrowby.yaml", "marrowby-segments-invented.csv", "marrowby-inspections.csv"} {
		b, err := os.ReadFile(filepath.Join(src, name))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, name), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return filepath.Join(dir, "marrowby.yaml")
}

func TestOutputRefusesInputs(t *testing.T) {
	path := scenarioCopy(t)
	dir := filepath.Dir(path)
	for _, c := range []struct {
		name string
		args []string
	}{
		{"the scenario", []string{"plan", path, "--format", "json", "--out", path}},
		{"the segment list", []string{"plan", path, "--format", "csv", "--out", filepath.Join(dir, "marrowby-segments-invented.csv")}},
		{"the scenario by another path", []string{"worklist", path, "--out", filepath.Join(dir, ".", "marrowby.yaml")}},
		{"the fit export", []string{"fit", filepath.Join(dir, "marrowby-inspections.csv"), "--scenario", path, "--bootstrap", "0", "--out", filepath.Join(dir, "marrowby-inspections.csv")}},
		{"the scales file", []string{"fit", "--scenario", path, "--method", "years-in-state", "--years-in-state", "culverts=10,8,7,5", "--save", path}},
	} {
		t.Run(c.name, func(t *testing.T) {
			before := listing(t, dir)
			code, _, errs := run(t, c.args...)
			if code != 2 || !strings.Contains(errs, "is an input of this run") || !strings.Contains(errs, "--force") {
				t.Errorf("exit %d, stderr %q; want 2 and a refusal naming --force", code, errs)
			}
			sameListing(t, before, listing(t, dir))
		})
	}
	// --force says the user means it.
	if code, _, errs := run(t, "plan", path, "--format", "json", "--out", path, "--force"); code != 0 {
		t.Errorf("with --force: exit %d: %s", code, errs)
	}
}

func TestOutputFolders(t *testing.T) {
	dir := t.TempDir()
	// --format csv --out DIR creates DIR and writes every table in it.
	code, _, errs := run(t, "plan", demo, "--format", "csv", "--out", filepath.Join(dir, "tables"))
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	got := listing(t, dir)
	var names []string
	for name := range got {
		names = append(names, name)
	}
	slices.Sort(names)
	want := []string{"tables/", "tables/class-spend.csv", "tables/condition.csv", "tables/funding.csv", "tables/group-spend.csv",
		"tables/indicators.csv", "tables/remaining-life.csv", "tables/service.csv", "tables/spend.csv", "tables/targets.csv",
		"tables/value.csv", "tables/work.csv"}
	if !slices.Equal(names[1:], want) {
		t.Errorf("wrote %v, want %v", names, want)
	}
	// A name ending in .csv is one table's file.
	if code, _, errs := run(t, "plan", demo, "--format", "csv", "--out", filepath.Join(dir, "work.csv")); code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, c := range []struct {
		name string
		args []string
		msg  string
	}{
		{"folder of a folder missing", []string{"plan", demo, "--format", "csv", "--out", filepath.Join(dir, "no", "tables")}, "does not exist; create it first"},
		{"file in a missing folder", []string{"plan", demo, "--format", "json", "--out", filepath.Join(dir, "no", "plan.json")}, "does not exist; create it first"},
		{"a folder where the file would be", []string{"plan", demo, "--format", "json", "--out", filepath.Join(dir, "tables")}, "is a folder; name a file"},
	} {
		t.Run(c.name, func(t *testing.T) {
			before := listing(t, dir)
			code, _, errs := run(t, c.args...)
			if code != 2 || !strings.Contains(errs, c.msg) {
				t.Errorf("exit %d, stderr %q; want 2 and %q", code, errs, c.msg)
			}
			sameListing(t, before, listing(t, dir))
		})
	}
	// An existing file that is not .csv is not taken for a folder.
	os.WriteFile(filepath.Join(dir, "notes"), []byte("mine"), 0o644)
	before := listing(t, dir)
	if code, _, errs := run(t, "plan", demo, "--format", "csv", "--out", filepath.Join(dir, "notes")); code != 2 || !strings.Contains(errs, "is a file, not a folder") {
		t.Errorf("exit %d, stderr %q", code, errs)
	}
	sameListing(t, before, listing(t, dir))
}

func TestOutputSymlinkTarget(t *testing.T) {
	// A symbolic link at --out is refused, and stays a link to what it
	// led to (wearplan does not write through links).
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "real.json"), []byte("mine"), 0o644)
	link := filepath.Join(dir, "plan.json")
	if err := os.Symlink("real.json", link); err != nil {
		t.Fatal(err)
	}
	before := listing(t, dir)
	code, _, errs := run(t, "plan", demo, "--format", "json", "--out", link)
	if code != 2 || !strings.Contains(errs, "is a symbolic link (to real.json)") {
		t.Errorf("exit %d, stderr %q", code, errs)
	}
	sameListing(t, before, listing(t, dir))
	// In a set too.
	os.Mkdir(filepath.Join(dir, "tables"), 0o755)
	os.Symlink("../real.json", filepath.Join(dir, "tables", "work.csv"))
	before = listing(t, dir)
	if code, _, errs := run(t, "plan", demo, "--format", "csv", "--out", filepath.Join(dir, "tables")); code != 2 || !strings.Contains(errs, "symbolic link") {
		t.Errorf("exit %d, stderr %q", code, errs)
	}
	sameListing(t, before, listing(t, dir))
}
