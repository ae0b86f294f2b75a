// Package fitstest holds test helpers shared by the FITS packages of vcz:
// running fitsverify (HEASARC's FITS conformance checker, Debian package
// fitsverify) and Debian's python3 with astropy on files a test wrote.
//
// When a tool is missing the helpers skip the test, except when the
// environment variable CI is non-empty: then they fail it, so continuous
// integration always exercises them.
package fitstest

import (
	"bytes"
	"os"
	"os/exec"
	"regexp"
	"strconv"
	"testing"
)

// Python is the interpreter used for astropy checks. Debian's python3 is
// named explicitly because other interpreters on the PATH may lack astropy.
const Python = "/usr/bin/python3"

// need skips or fails the test when the named program is unavailable.
func need(t testing.TB, prog string, probe ...string) string {
	t.Helper()
	path, err := exec.LookPath(prog)
	if err == nil && len(probe) > 0 {
		err = exec.Command(path, probe...).Run()
	}
	if err != nil {
		if os.Getenv("CI") != "" {
			t.Fatalf("%s is required when CI is set: %v", prog, err)
		}
		t.Skipf("%s not available: %v", prog, err)
	}
	return path
}

var summary = regexp.MustCompile(`Verification found (\d+) warning\(s\) and (\d+) error\(s\)`)

// Verify runs fitsverify on path and fails the test unless it reports 0
// warnings and 0 errors. It returns the tool's output.
func Verify(t testing.TB, path string) string {
	t.Helper()
	prog := need(t, "fitsverify")
	out, _ := exec.Command(prog, path).CombinedOutput()
	m := summary.FindSubmatch(out)
	if m == nil {
		t.Fatalf("fitsverify %s: no summary line in output:\n%s", path, out)
	}
	warn, _ := strconv.Atoi(string(m[1]))
	errs, _ := strconv.Atoi(string(m[2]))
	if warn != 0 || errs != 0 {
		t.Errorf("fitsverify %s: %d warnings, %d errors:\n%s", path, warn, errs, out)
	}
	return string(out)
}

// RunPython runs script (a file path) with the Debian python3 and the
// given arguments, checking first that astropy imports. It fails the test
// when the script exits with an error and returns its standard output.
func RunPython(t testing.TB, script string, args ...string) []byte {
	t.Helper()
	need(t, Python, "-c", "import astropy.io.fits, astropy.wcs")
	cmd := exec.Command(Python, append([]string{script}, args...)...)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("%s %s %v: %v\n%s", Python, script, args, err, stderr.String())
	}
	if stderr.Len() > 0 {
		t.Logf("%s printed on stderr:\n%s", script, stderr.String())
	}
	return out
}
