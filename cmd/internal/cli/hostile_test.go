package cli

import (
	"context"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"wearplan/optimize/optimizetest"
)

// The hostile corpus: files made to hurt a reader (testdata/hostile, and
// the larger ones generated below, never committed). Each case runs the
// command in a child process (the test binary, see TestMain) and must end
// with the expected exit code (2 for bad input, 0 where the file is
// valid), within budgets that a bounded reader keeps far below:
//
//   - 5 s of CPU (user + system; CPU time, not wall time, so that a loaded
//     machine does not fail the test; a run is killed after 2 minutes of
//     wall time, which catches hangs such as a read from a named pipe);
//   - 512 MiB peak resident memory (the child's ru_maxrss);
//   - 64 KiB of messages on stderr;
//   - nothing written: the case's folder is the same after the run.
const (
	hostileCPU    = 5 * time.Second
	hostileRSSMiB = 512
	hostileStderr = 64 << 10
)

const hostileDir = "../../../testdata/hostile"

type hostileCase struct {
	name string
	// files are copied from testdata/hostile (or, with a path, from it)
	// into the case's folder; make adds generated ones.
	files []string
	make  func(t *testing.T, dir string)
	args  []string
	exit  int
	// stderr must contain each of these; stdout must not contain noStdout
	// and must contain stdout.
	stderr   []string
	noStderr string
	noStdout string
	stdout   string
}

func TestHostileCorpus(t *testing.T) {
	if testing.Short() {
		t.Skip("the hostile corpus runs child processes; skipped with -short")
	}
	demoFiles := []string{"../../scenarios/examples/marrowby.yaml", "../../scenarios/examples/marrowby-segments-invented.csv"}
	cases := []hostileCase{
		// 1. Aliases that amplify: a long anchored name used many times;
		// nested aliases (billion laughs); many distinct long names.
		{name: "alias long name", files: []string{"01-alias-long-name.yaml"}, args: []string{"check", "01-alias-long-name.yaml"}, exit: 2, stderr: []string{"01-alias-long-name.yaml:62", "anchors and aliases"}},
		{name: "alias 4 MB", make: genAlias4MB, args: []string{"check", "alias.yaml"}, exit: 2, stderr: []string{"anchors and aliases"}},
		{name: "billion laughs", files: []string{"02-billion-laughs.yaml"}, args: []string{"check", "02-billion-laughs.yaml"}, exit: 2, stderr: []string{"anchors and aliases"}},
		{name: "long names without aliases", make: genLongNames, args: []string{"check", "long-names.yaml"}, exit: 2, stderr: []string{"characters in all", "more problems not listed"}},
		// 5. Problem lists: 200,000 unknown keys.
		{name: "200,000 unknown keys", make: genUnknownKeys, args: []string{"check", "unknown-keys.yaml"}, exit: 2, stderr: []string{"unknown key", "more problems not listed"}},
		// 2. WKT nested deep: a little (committed), 40,000 deep, and
		// 100,000 deep (past the line limit).
		{name: "WKT nested 13 deep", files: []string{"06-deep-wkt.yaml", "06-deep-wkt.csv"}, args: []string{"check", "06-deep-wkt.yaml"}, exit: 2, stderr: []string{"06-deep-wkt.csv:2", "nested 13 deep"}},
		{name: "WKT nested 40,000 deep", files: []string{"06-deep-wkt.yaml"}, make: genDeepWKT(40000), args: []string{"check", "06-deep-wkt.yaml"}, exit: 2, stderr: []string{"06-deep-wkt.csv:2", "nested 40001 deep"}},
		{name: "WKT nested 100,000 deep", files: []string{"06-deep-wkt.yaml"}, make: genDeepWKT(100000), args: []string{"check", "06-deep-wkt.yaml"}, exit: 2, stderr: []string{"06-deep-wkt.csv:2", "bytes"}},
		// 3. Sizes checked before reading: a 2 GiB scenario, and a 2 GiB
		// base (sparse files: they take no disk).
		{name: "2 GiB scenario", make: genSparse("huge.yaml"), args: []string{"check", "huge.yaml"}, exit: 2, stderr: []string{"2147483648 bytes", "at most 8388608"}},
		{name: "2 GiB base", make: func(t *testing.T, dir string) {
			genSparse("huge.yaml")(t, dir)
			writeFile(t, dir, "small.yaml", "extends: huge.yaml\nname: a variant\n")
		}, args: []string{"check", "small.yaml"}, exit: 2, stderr: []string{"small.yaml:1", "2147483648 bytes"}},
		// 4. Segment lists: 200,000 rows reusing 1,000 ids; 300,000 valid
		// rows (the 10-million-row figure is a benchmark).
		{name: "200,000 rows, 1,000 ids", files: []string{"05-nan-wkt.yaml"}, make: genSegments(200000, 1000), args: []string{"check", "05-nan-wkt.yaml"}, exit: 2, stderr: []string{"is already used on line 2", "more problems not listed"}},
		{name: "300,000 valid rows", files: []string{"05-nan-wkt.yaml"}, make: genSegments(300000, 0), args: []string{"check", "05-nan-wkt.yaml"}, exit: 0, stdout: "300000 segments"},
		{name: "a quote left open in 20 MB", files: []string{"05-nan-wkt.yaml"}, make: genOpenQuote, args: []string{"check", "05-nan-wkt.yaml"}, exit: 2, stderr: []string{"05-nan-wkt.csv:3", "quoted field"}},
		{name: "100,000 bad rows", files: []string{"05-nan-wkt.yaml"}, make: genBadRows, args: []string{"check", "05-nan-wkt.yaml"}, exit: 2, stderr: []string{"is not a number", "more problems not listed"}},
		// 6. Files that are not regular files.
		{name: "FIFO scenario", make: genFIFO("fifo.yaml"), args: []string{"check", "fifo.yaml"}, exit: 2, stderr: []string{"named pipe"}},
		{name: "FIFO base", make: func(t *testing.T, dir string) {
			genFIFO("base.yaml")(t, dir)
			writeFile(t, dir, "s.yaml", "extends: base.yaml\n")
		}, args: []string{"check", "s.yaml"}, exit: 2, stderr: []string{"s.yaml:1", "named pipe"}},
		{name: "FIFO segment list", files: []string{"05-nan-wkt.yaml"}, make: genFIFO("05-nan-wkt.csv"), args: []string{"check", "05-nan-wkt.yaml"}, exit: 2, stderr: []string{"named pipe"}},
		{name: "folder as segment list", files: []string{"05-nan-wkt.yaml"}, make: func(t *testing.T, dir string) { os.Mkdir(filepath.Join(dir, "05-nan-wkt.csv"), 0o755) }, args: []string{"check", "05-nan-wkt.yaml"}, exit: 2, stderr: []string{"is a folder"}},
		{name: "device node as segment list", files: []string{"05-nan-wkt.yaml"}, make: func(t *testing.T, dir string) {
			// /dev/zero's numbers (1, 5) on Linux; making a device node
			// needs root.
			if err := syscall.Mknod(filepath.Join(dir, "05-nan-wkt.csv"), syscall.S_IFCHR|0o644, 1<<8|5); err != nil {
				t.Skipf("cannot make a device node here: %v", err)
			}
		}, args: []string{"check", "05-nan-wkt.yaml"}, exit: 2, stderr: []string{"character device"}},
		{name: "device linked as segment list", files: []string{"05-nan-wkt.yaml"}, make: func(t *testing.T, dir string) {
			sub := filepath.Join(dir, "dev")
			os.Mkdir(sub, 0o755)
			// /dev/zero reached through a link inside the folder.
			writeFile(t, dir, "05-nan-wkt.yaml", strings.Replace(readHostile(t, "05-nan-wkt.yaml"), "file: 05-nan-wkt.csv", "file: dev/zero.csv", 1))
			os.Symlink("/dev/zero", filepath.Join(sub, "zero.csv"))
		}, args: []string{"check", "05-nan-wkt.yaml"}, exit: 2, stderr: []string{"outside the scenario's folder"}},
		{name: "folder as scenario", make: func(t *testing.T, dir string) { os.Mkdir(filepath.Join(dir, "s.yaml"), 0o755) }, args: []string{"check", "s.yaml"}, exit: 2, stderr: []string{"is a folder"}},
		// 7. Overflow.
		{name: "replacement cost 1e306", files: []string{"03-overflow-replacement-cost.yaml"}, args: []string{"check", "03-overflow-replacement-cost.yaml"}, exit: 2, stderr: []string{"03-overflow-replacement-cost.yaml:27", "replacement_cost"}},
		{name: "quantity 1e308", files: []string{"04-overflow-quantity.yaml"}, args: []string{"plan", "04-overflow-quantity.yaml"}, exit: 2, stderr: []string{"04-overflow-quantity.yaml:41", "inventory"}},
		// 8. NaN coordinates.
		{name: "NaN in WKT", files: []string{"05-nan-wkt.yaml", "05-nan-wkt.csv"}, args: []string{"worklist", "05-nan-wkt.yaml", "--format", "geojson"}, exit: 2, stderr: []string{"05-nan-wkt.csv:3", "05-nan-wkt.csv:4", "not a finite number"}},
		{name: "NaN in lon/lat", files: []string{"05-nan-wkt.yaml"}, make: func(t *testing.T, dir string) {
			writeFile(t, dir, "05-nan-wkt.csv", "id,class,quantity,condition,lon,lat\nR-1,roads,0.5,85,NaN,NaN\n")
		}, args: []string{"check", "05-nan-wkt.yaml"}, exit: 2, stderr: []string{"05-nan-wkt.csv:2", "not a longitude"}},
		// 10. Links that leave the folder, quoting nothing of what they
		// lead to; names with terminal escapes; names that are formulas.
		{name: "segment list linked outside", files: []string{"05-nan-wkt.yaml"}, make: genOutsideLink("05-nan-wkt.csv"), args: []string{"check", "05-nan-wkt.yaml"}, exit: 2, stderr: []string{"outside the scenario's folder"}, noStderr: "SECRET"},
		{name: "base linked outside", make: func(t *testing.T, dir string) {
			genOutsideLink("base.yaml")(t, dir)
			writeFile(t, dir, "s.yaml", "extends: base.yaml\n")
		}, args: []string{"check", "s.yaml"}, exit: 2, stderr: []string{"outside the scenario's folder"}, noStderr: "SECRET"},
		{name: "escape sequences in names", files: []string{"07-escape-in-names.yaml"}, args: []string{"plan", "07-escape-in-names.yaml"}, exit: 0, noStdout: "\x1b", stdout: "culverts\uFFFD[31m"},
		{name: "escape sequences in messages", make: func(t *testing.T, dir string) {
			writeFile(t, dir, "s.yaml", "name: x\nclasses:\n  - {name: \"a\\e[2J\", scale: nowhere}\n")
		}, args: []string{"check", "s.yaml"}, exit: 2, stderr: []string{"unknown scale"}, noStderr: "\x1b"},
		{name: "formulas in names", files: []string{"08-formula-names.yaml", "08-formula-names.csv"}, args: []string{"worklist", "08-formula-names.yaml", "--format", "csv"}, exit: 0, stdout: `'=HYPERLINK(`},
		// Decimal commas and day-first dates: refused by line without the
		// setting, read with it.
		{name: "decimal commas with the setting", files: []string{"09-decimal-commas.yaml", "09-decimal-commas.csv"}, args: []string{"check", "09-decimal-commas.yaml"}, exit: 0, stdout: "40 segments"},
		{name: "decimal commas without it", files: []string{"09-decimal-commas-unset.yaml", "09-decimal-commas.csv"}, args: []string{"check", "09-decimal-commas-unset.yaml"}, exit: 2, stderr: []string{"09-decimal-commas.csv:2: lane_km", `add decimal: ","`}},
		{name: "day-first dates without the setting", files: append([]string{"10-day-first-inspections.csv"}, demoFiles...), args: []string{"fit", "10-day-first-inspections.csv", "--scenario", "marrowby.yaml", "--delimiter", ";", "--decimal", ","}, exit: 2, stderr: []string{"10-day-first-inspections.csv:2: inspected", "set the date format", "--date-format"}},
		{name: "day-first dates with it", files: append([]string{"10-day-first-inspections.csv"}, demoFiles...), args: []string{"fit", "10-day-first-inspections.csv", "--scenario", "marrowby.yaml", "--delimiter", ";", "--decimal", ",", "--date-format", "DD/MM/YYYY", "--bootstrap", "50"}, exit: 0, stdout: "Rows read: 360"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			for _, f := range c.files {
				writeFile(t, dir, filepath.Base(f), readHostile(t, f))
			}
			if c.make != nil {
				c.make(t, dir)
			}
			before := listing(t, dir)
			// A child started by vfork records this process's peak RSS
			// as its own when it execs (Linux); start from this
			// process's current size, not from earlier tests' peaks.
			optimizetest.ResetPeakRSS()
			ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
			defer cancel()
			cmd := child(t, "main", c.args...)
			cmd = exec.CommandContext(ctx, cmd.Path, cmd.Args[1:]...)
			cmd.Env = append(os.Environ(), childEnv+"=main")
			cmd.Dir = dir
			var stdout, stderr strings.Builder
			cmd.Stdout, cmd.Stderr = &stdout, &stderr
			err := cmd.Run()
			var ee *exec.ExitError
			code := 0
			if errors.As(err, &ee) {
				code = ee.ExitCode()
			} else if err != nil {
				t.Fatal(err)
			}
			if ctx.Err() != nil {
				t.Fatalf("still running after 2 minutes: killed")
			}
			ps := cmd.ProcessState
			cpu := ps.UserTime() + ps.SystemTime()
			rss := optimizetest.ChildPeakRSS(ps)
			t.Logf("exit %d, CPU %v, peak RSS %.0f MiB, stderr %d bytes", code, cpu.Round(time.Millisecond), rss, stderr.Len())
			if code != c.exit {
				t.Errorf("exit %d, want %d; stderr:\n%.2000s", code, c.exit, stderr.String())
			}
			if cpu > hostileCPU {
				t.Errorf("%v of CPU, budget %v", cpu, hostileCPU)
			}
			if rss > hostileRSSMiB {
				t.Errorf("peak RSS %.0f MiB, budget %d MiB", rss, hostileRSSMiB)
			}
			if stderr.Len() > hostileStderr {
				t.Errorf("%d bytes on stderr, budget %d", stderr.Len(), hostileStderr)
			}
			for _, want := range c.stderr {
				if !strings.Contains(stderr.String(), want) {
					t.Errorf("stderr lacks %q:\n%.2000s", want, stderr.String())
				}
			}
			if c.noStderr != "" && strings.Contains(stderr.String(), c.noStderr) {
				t.Errorf("stderr contains %q:\n%.2000s", c.noStderr, stderr.String())
			}
			if c.noStdout != "" && strings.Contains(stdout.String(), c.noStdout) {
				t.Errorf("stdout contains %q", c.noStdout)
			}
			if c.stdout != "" && !strings.Contains(stdout.String(), c.stdout) {
				t.Errorf("stdout lacks %q:\n%.2000s", c.stdout, stdout.String())
			}
			sameListing(t, before, listing(t, dir))
		})
	}
}

func readHostile(t *testing.T, name string) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(hostileDir, name))
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

func writeFile(t *testing.T, dir, name, text string) {
	t.Helper()
	if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
}

// genAlias4MB writes the 4 MB case: a name of 2 million characters
// anchored once and used as the class of 2,000 targets.
func genAlias4MB(t *testing.T, dir string) {
	var b strings.Builder
	b.WriteString("name: &long " + strings.Repeat("x", 2_000_000) + "\ntargets:\n")
	for range 2000 {
		b.WriteString("  - {class: *long, group: poor, max_share: 0.25}\n")
	}
	b.WriteString("other: " + strings.Repeat("y", 2_000_000) + "\n")
	writeFile(t, dir, "alias.yaml", b.String())
}

// genLongNames writes a valid scenario whose 150 targets name classes of
// 30,000 characters each that do not exist: each message quotes one.
func genLongNames(t *testing.T, dir string) {
	base := readHostile(t, "../marrowby-small.yaml")
	var b strings.Builder
	b.WriteString(strings.Split(base, "targets:")[0] + "targets:\n")
	for i := range 150 {
		fmt.Fprintf(&b, "  - {class: %s%d, group: poor, max_share: 0.25}\n", strings.Repeat("n", 30000), i)
	}
	writeFile(t, dir, "long-names.yaml", b.String())
}

func genUnknownKeys(t *testing.T, dir string) {
	var b strings.Builder
	for i := range 200_000 {
		fmt.Fprintf(&b, "key%d: 1\n", i)
	}
	writeFile(t, dir, "unknown-keys.yaml", b.String())
}

func genDeepWKT(depth int) func(*testing.T, string) {
	return func(t *testing.T, dir string) {
		wkt := strings.Repeat("GEOMETRYCOLLECTION (", depth) + "POINT (1 2)" + strings.Repeat(")", depth)
		writeFile(t, dir, "06-deep-wkt.csv", "id,class,quantity,condition,wkt\nR-1,roads,0.5,85,\""+wkt+"\"\n")
	}
}

func genSparse(name string) func(*testing.T, string) {
	return func(t *testing.T, dir string) {
		f, err := os.Create(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		defer f.Close()
		if err := f.Truncate(2 << 30); err != nil {
			t.Skipf("cannot make a 2 GiB sparse file here: %v", err)
		}
	}
}

// genSegments writes rows segment rows of class roads; with ids > 0 the
// ids repeat every ids rows.
func genSegments(rows, ids int) func(*testing.T, string) {
	return func(t *testing.T, dir string) {
		var b strings.Builder
		b.WriteString("id,class,quantity,condition,wkt\n")
		for i := range rows {
			id := i
			if ids > 0 {
				id = i % ids
			}
			fmt.Fprintf(&b, "R-%07d,roads,0.%03d,%d,\n", id, 1+i%999, i%101)
		}
		writeFile(t, dir, "05-nan-wkt.csv", b.String())
	}
}

func genOpenQuote(t *testing.T, dir string) {
	var b strings.Builder
	b.WriteString("id,class,quantity,condition,wkt\nR-1,roads,0.5,85,\nR-2,roads,0.5,85,\"POINT (1 2)\n")
	for b.Len() < 20<<20 {
		b.WriteString("R-3,roads,0.5,85,\n")
	}
	writeFile(t, dir, "05-nan-wkt.csv", b.String())
}

func genBadRows(t *testing.T, dir string) {
	var b strings.Builder
	b.WriteString("id,class,quantity,condition,wkt\n")
	for i := range 100_000 {
		fmt.Fprintf(&b, "R-%d,roads,%d km,85,\n", i, i)
	}
	writeFile(t, dir, "05-nan-wkt.csv", b.String())
}

func genFIFO(name string) func(*testing.T, string) {
	return func(t *testing.T, dir string) {
		if err := syscall.Mkfifo(filepath.Join(dir, name), 0o644); err != nil {
			t.Skipf("cannot make a named pipe here: %v", err)
		}
	}
}

// genOutsideLink links name to a file outside the case's folder whose
// first line must never be quoted.
func genOutsideLink(name string) func(*testing.T, string) {
	return func(t *testing.T, dir string) {
		outside := filepath.Join(t.TempDir(), "private.txt")
		if err := os.WriteFile(outside, []byte("SECRET first line\nmore\n"), 0o600); err != nil {
			t.Fatal(err)
		}
		if err := os.Symlink(outside, filepath.Join(dir, name)); err != nil {
			t.Fatal(err)
		}
	}
}
