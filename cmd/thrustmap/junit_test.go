package main

import (
	"encoding/xml"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
)

// TestJUnitReport: the report of a run over a passing script, a failing
// one and a broken one validates against the JUnit schema CI servers read
// (testdata/junit/junit.xsd, checked with libxml2's xmllint), and each
// suite's tests, failures, errors and skipped agree with its test cases.
func TestJUnitReport(t *testing.T) {
	xmllint, err := exec.LookPath("xmllint")
	if err != nil {
		if os.Getenv("THRUSTMAP_REQUIRE_XMLLINT") != "" {
			t.Fatal("xmllint is required (Debian package libxml2-utils)")
		}
		t.Skip("no xmllint (Debian package libxml2-utils): the schema check needs it")
	}
	dir := t.TempDir()
	scripts := map[string]string{
		"pass.script":   "set alt 2000 oat 30\ntarget takeoff\ncheck value > 0\ncheck on_ground == false\n",
		"fail.script":   "check 1 == 2\ncheck 2 == 2\ncheck 3 == 4\n",
		"broken.script": "check 1 == 1\ntargte takeoff\ncheck 2 == 2\n",
	}
	var args []string
	for _, name := range []string{"pass.script", "broken.script", "fail.script"} {
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, []byte(scripts[name]), 0o644); err != nil {
			t.Fatal(err)
		}
		args = append(args, path)
	}
	report := filepath.Join(dir, "report.xml")
	if code := run(append([]string{"run", "--junit", report}, args...), io.Discard, io.Discard); code != exitUsage {
		t.Fatalf("exit %d, want %d (a script had an error)", code, exitUsage)
	}
	schema, _ := filepath.Abs("../../testdata/junit/junit.xsd")
	if out, err := exec.Command(xmllint, "--noout", "--schema", schema, report).CombinedOutput(); err != nil {
		t.Fatalf("the report does not validate against the JUnit schema: %v\n%s", err, out)
	}
	b, err := os.ReadFile(report)
	if err != nil {
		t.Fatal(err)
	}
	var got junitSuites
	if err := xml.Unmarshal(b, &got); err != nil {
		t.Fatal(err)
	}
	want := []struct{ tests, failures, errors int }{
		{2, 0, 0}, // pass: two checks
		{2, 0, 1}, // broken: one check, then the error ends it
		{3, 2, 0}, // fail: every script runs, whatever the others did
	}
	if len(got.Suites) != len(want) {
		t.Fatalf("%d suites, want one per script (%d)", len(got.Suites), len(want))
	}
	for i, s := range got.Suites {
		var failures, errs int
		for _, c := range s.Cases {
			if c.Failure != nil {
				failures++
			}
			if c.Error != nil {
				errs++
			}
		}
		if s.Tests != len(s.Cases) || s.Failures != failures || s.Errors != errs || s.Skipped != 0 {
			t.Errorf("%s: tests=%d failures=%d errors=%d skipped=%d over %d cases (%d failures, %d errors)",
				s.Name, s.Tests, s.Failures, s.Errors, s.Skipped, len(s.Cases), failures, errs)
		}
		if w := want[i]; s.Tests != w.tests || s.Failures != w.failures || s.Errors != w.errors {
			t.Errorf("%s: tests=%d failures=%d errors=%d, want %+v", s.Name, s.Tests, s.Failures, s.Errors, w)
		}
	}
}
