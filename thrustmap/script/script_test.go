package script

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func newTest(t testing.TB) (*Interpreter, *bytes.Buffer) {
	t.Helper()
	var out bytes.Buffer
	in, err := New(&out)
	if err != nil {
		t.Fatal(err)
	}
	return in, &out
}

// TestScriptErrors: each script error names the file and line and what was
// wrong; nothing runs past it.
func TestScriptErrors(t *testing.T) {
	tests := []struct{ line, want string }{
		{"fly to FL350", `unknown command "fly"`},
		{"set alt", "usage: set KEY VALUE"},
		{"set alt 12Q", `set alt: bad altitude "12Q"`},
		{"set speed 250", `unknown key "speed"`},
		{"set alt 200000", "out of range"},
		{"set alt 0 oat 300", "set oat: bad temperature \"300\": 300 °C is +285 °C from ISA (15.0 °C) at 0 ft, beyond any air temperature: did you mean 300 K?"},
		{"set oat 250 alt FL400", "did you mean 250 K?"},
		{"set assumed 0K", "did you mean 0 °C?"},
		{"bleed wing-heat on", `unknown bleed "wing-heat"`},
		{"target", "usage: target RATING"},
		{"target max-cruise", `unknown rating "max-cruise"`},
		{"print nosuch + 1", "unknown name nosuch (column 1). The names are alt, assumed, "},
		{"print valu + 1", "unknown name valu (column 1): did you mean value?"},
		{"print target()", "not enough arguments to call target (column 1): target(name)"},
		{"let alt = 5", `"alt" is a name of the environment`},
		{"let 9x = 5", "is not a name"},
		{"check value within of 3", "usage: check EXPRESSION within TOL of EXPECTED"},
		{"check 1 + 1", "needs true or false"},
		{"check 1 within -1 of 1", "tolerance -1 is negative"},
		{"lever x 100", `lever id "x" is not a number`},
		{"expect-error unquoted target x", "usage: expect-error"},
		{"include nosuch.script", "no such file"},
	}
	for _, tc := range tests {
		in, _ := newTest(t)
		err := in.Run(strings.NewReader("# a comment\n\n"+tc.line+"\nprint 1\n"), "s.script")
		var se *Error
		if !errors.As(err, &se) || se.File != "s.script" || se.Line != 3 || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%q: err = %v, want s.script:3 and %q", tc.line, err, tc.want)
		}
	}
}

// TestChecks counts passes and failures and reports each failure's place,
// what was checked, what it gave and what was expected.
func TestChecks(t *testing.T) {
	in, out := newTest(t)
	var seen []Assertion
	in.Observer = func(a Assertion) { seen = append(seen, a) }
	src := strings.Join([]string{
		"profile ../testdata/handworked.toml",
		"set alt 5000 oat 15",
		"target takeoff",
		"check value within 1e-9 of 93.5", // hand-worked (see target_test.go)
		"check value within 0.1 of 95",    // fails
		"let x = value * 2",
		"check x == 187",
		`expect-error "unknown rating" target nope`,
		`expect-error "unknown rating" target takeoff`, // fails: no error
		"check on_ground",                              // fails
	}, "\n")
	if err := in.Run(strings.NewReader(src), "c.script"); err != nil {
		t.Fatal(err)
	}
	if in.Passed() != 3 || in.Failed() != 3 || len(seen) != 6 {
		t.Fatalf("passed %d failed %d seen %d", in.Passed(), in.Failed(), len(seen))
	}
	f := in.Failures()[0]
	if f.File != "c.script" || f.Line != 5 || f.Expr != "value" || f.Got != "93.5" || f.Want != "95 ± 0.1" {
		t.Errorf("failure %+v", f)
	}
	if !strings.Contains(out.String(), "FAIL c.script:9: check target takeoff: got no error") {
		t.Errorf("output:\n%s", out)
	}
}

// TestPointsAndSave: a test-point CSV checks each row; an edited
// calibration is saved atomically and reloads.
func TestPointsAndSave(t *testing.T) {
	dir := t.TempDir()
	csv := "rating,alt_ft,oat_c,expected,tol\ntakeoff,5000,15,93.5,1e-9\ntakeoff,0,30,99,0.5\n"
	if err := os.WriteFile(filepath.Join(dir, "p.csv"), []byte(csv), 0o644); err != nil {
		t.Fatal(err)
	}
	hand, _ := filepath.Abs("../testdata/handworked.toml")
	src := fmt.Sprintf("profile %s\npoints p.csv\nprofile demo\ncalibration demo\npoint 1 1900 13\nsave cal.toml\ncalibration cal.toml\nlever 1 1900\ncheck tla within 1e-9 of 13\n", hand)
	if err := os.WriteFile(filepath.Join(dir, "s.script"), []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	in, out := newTest(t)
	if err := in.RunFile(filepath.Join(dir, "s.script")); err != nil {
		t.Fatal(err)
	}
	if in.Passed() != 2 || in.Failed() != 1 || !strings.Contains(out.String(), "p.csv:3: check takeoff at 0 ft, 30 °C: got 95") {
		t.Errorf("passed %d failed %d\n%s", in.Passed(), in.Failed(), out)
	}
	if in.CalibrationEdited() {
		t.Error("saved calibration still marked edited")
	}
}

// TestNoFiles: a sandboxed session refuses file commands.
func TestNoFiles(t *testing.T) {
	for _, line := range []string{"include x.script", "save x.toml", "points x.csv", "profile ./x.toml", "calibration x"} {
		in, _ := newTest(t)
		in.NoFiles = true
		if err := in.Exec(line, "f", 1); !errors.Is(err, errNoFiles) {
			t.Errorf("%s: %v", line, err)
		}
	}
}

// FuzzInterpreter: no script text panics the interpreter (files refused).
func FuzzInterpreter(f *testing.F) {
	for _, s := range []string{
		"set alt FL350 oat -40 mach 0.8\ntarget climb\ncheck value within 1 of 90",
		"calibration demo\nlever 1 100 2000 4000\ntla -30\nprint gate",
		"let a = rating('takeoff') * 2\nprint a / 0\ncheck a > 1",
		`expect-error "x" expect-error "y" target z`,
		"field 5400 29.77\nset assumed 55 ground on\nbleed engine-anti-ice on\nshow\nratings\ngates\nhelp\nhelp check",
		"print rating_at('takeoff', 1e308, -1e308) + isa_temp(1e9)",
		"point 1 5 5\nset alt -99999",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		in, err := New(io.Discard)
		if err != nil {
			t.Fatal(err)
		}
		in.NoFiles = true
		in.Run(strings.NewReader(src), "fuzz.script")
		if v, ok := in.env["value"].(float64); ok && math.IsNaN(v) {
			t.Fatal("NaN reached the session's value")
		}
	})
}

// BenchmarkRun100kChecks runs a script of 100 000 checks (with the
// conditions and targets they check). Budget: 1 s per op.
func BenchmarkRun100kChecks(b *testing.B) {
	var sb strings.Builder
	sb.WriteString("profile demo\n")
	for i := range 100_000 {
		fmt.Fprintf(&sb, "set alt %d oat %d\ntarget takeoff\ncheck value within 20 of 95\n", i%14000, i%40)
	}
	src := sb.String()
	b.ReportAllocs()
	for b.Loop() {
		in, err := New(io.Discard)
		if err != nil {
			b.Fatal(err)
		}
		if err := in.Run(strings.NewReader(src), "bench.script"); err != nil {
			b.Fatal(err)
		}
		if in.Passed() != 100_000 {
			b.Fatalf("%d passed", in.Passed())
		}
	}
}

// TestFailedChecksExplain: a failed check shows the value of every
// variable it compared, for comparisons and within alike; a gate of "" says
// which gates the lever was between.
func TestFailedChecksExplain(t *testing.T) {
	tests := []struct{ lines, want string }{
		// Demo gates: climb at 27°, continuous at 40° (1.5° capture each), so
		// 33° is between them.
		{"tla 33\ncheck gate == \"takeoff\"", `check gate == "takeoff": got false, want true (gate = "" (between climb and continuous))`},
		{"tla 27\ncheck gate == \"takeoff\" && tla > 30", `(gate = "climb", tla = 27)`},
		{"set alt 5000 oat 15\ntarget climb\nlet want = 80\ncheck value + 0 within 0.5 of want", `(value = `},
		{"set alt 5000 oat 15\ntarget climb\nlet want = 80\ncheck value within 0.5 of want", `, want = 80)`},
		{"set alt 5000 oat 15\ncheck oat > isa_temp(alt) + 30", `(oat = 15, alt = 5000)`},
	}
	for _, tc := range tests {
		in, out := newTest(t)
		if err := in.Run(strings.NewReader("profile demo\n"+tc.lines+"\n"), "x.script"); err != nil {
			t.Fatalf("%q: %v", tc.lines, err)
		}
		if in.Failed() != 1 || !strings.Contains(out.String(), tc.want) {
			t.Errorf("%q: failed %d, output\n%s\nwant it to contain %q", tc.lines, in.Failed(), out, tc.want)
		}
	}
}

// TestPointNamesAndHeader: each test point is named by every condition its
// row gives, and a file whose first line is data, not a header, is told the
// columns it needs.
func TestPointNamesAndHeader(t *testing.T) {
	dir := t.TempDir()
	rows := "rating,alt_ft,oat_c,mach,bleeds,assumed_c,expected,tol\n" +
		"takeoff,2000,25,,,,1,0.1\n" +
		"takeoff,2000,25,0.2,,,1,0.1\n" +
		"takeoff,2000,25,,engine-anti-ice,,1,0.1\n" +
		"takeoff,2000,25,,,45,1,0.1\n"
	noHeader := "takeoff,2000,25,97.4,0.1\n"
	for name, text := range map[string]string{"p.csv": rows, "nohead.csv": noHeader} {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	in, out := newTest(t)
	if err := in.Run(strings.NewReader("points "+filepath.Join(dir, "p.csv")+"\n"), filepath.Join(dir, "s.script")); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{
		"check takeoff at 2000 ft, 25 °C: got",
		"check takeoff at 2000 ft, 25 °C, Mach 0.2: got",
		"check takeoff at 2000 ft, 25 °C, bleeds engine-anti-ice: got",
		"check takeoff at 2000 ft, 25 °C, assumed 45 °C: got",
	} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	err := in.Run(strings.NewReader("points "+filepath.Join(dir, "nohead.csv")+"\n"), filepath.Join(dir, "s.script"))
	if err == nil || !strings.Contains(err.Error(), "no header row: the first line must name the columns, rating,alt_ft,oat_c,mach,bleeds,assumed_c,expected,tol") {
		t.Errorf("no header: %v", err)
	}
}

// TestHelpExamplesRun: every command's help has a usage line and an example,
// and each example runs on the demo profile and calibration without a script
// error or a failed check (files it names are made in a scratch directory).
func TestHelpExamplesRun(t *testing.T) {
	dir := t.TempDir()
	files := map[string]string{
		"points.csv":         "rating,alt_ft,oat_c,expected,tol\nidle,0,15,0,1000\n",
		"more-checks.script": "check 1 + 1 == 2\n",
	}
	for name, text := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	for _, cmd := range Commands() {
		if cmd.Usage == "" || !strings.HasPrefix(cmd.Usage, cmd.Name) || cmd.Example == "" {
			t.Errorf("%s: usage %q, example %q", cmd.Name, cmd.Usage, cmd.Example)
			continue
		}
		if !strings.HasPrefix(cmd.Example, cmd.Name) && !strings.Contains(cmd.Example, "\n"+cmd.Name) {
			t.Errorf("%s: the example %q does not use the command", cmd.Name, cmd.Example)
		}
		in, out := newTest(t)
		src := "profile demo\ncalibration demo\n" + cmd.Example + "\n"
		if err := in.Run(strings.NewReader(src), filepath.Join(dir, "example.script")); err != nil {
			t.Errorf("%s: example fails: %v\n%s", cmd.Name, err, out)
		}
		if in.Failed() > 0 {
			t.Errorf("%s: example fails a check:\n%s", cmd.Name, out)
		}
	}
	in, out := newTest(t)
	if err := in.Run(strings.NewReader("help\nhelp check\n"), "h.script"); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"  exit ", "  quit ", "Example:\n    tla 27\n    check gate == \"climb\""} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("help lacks %q:\n%s", want, out)
		}
	}
}
