package main

import (
	"os"
	"os/exec"
	"strings"
	"testing"

	"cmdenv.whirlfit.invalid"
)

// Under LANG=C.UTF-8 (this build machine's setting) the window
// toolkit's locale lookup used to print "Fyne error: Error parsing user
// locale C" on every run (see package cmdenv). The test runs this test
// binary again with that setting: its packages, the toolkit's among them,
// are initialised as the command's are, and standard error must stay clean.
func TestNoLocaleErrorUnderCUTF8(t *testing.T) {
	if os.Getenv("WHIRLFIT_LOCALE_CHILD") == "1" {
		return // the child: initialisation is what is tested
	}
	cmd := exec.Command(os.Args[0], "-test.run=^TestNoLocaleErrorUnderCUTF8$")
	cmd.Env = append(os.Environ(), "WHIRLFIT_LOCALE_CHILD=1", "LC_ALL=", "LC_MESSAGES=", "LANG=C.UTF-8", "LANGUAGE=")
	out, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("child: %v\n%s", err, out)
	}
	if strings.Contains(string(out), "locale") {
		t.Errorf("with LANG=C.UTF-8 the command prints:\n%s", out)
	}
}

func TestPlainLocale(t *testing.T) {
	for in, want := range map[string]string{
		"C.UTF-8": "C", "C.utf8": "C", "POSIX": "POSIX", "C": "C", "POSIX@euro": "POSIX",
		"en_GB.UTF-8": "en_GB.UTF-8", "de_DE@euro": "de_DE@euro", "Cy_GB.UTF-8": "Cy_GB.UTF-8",
	} {
		if got := cmdenv.Plain(in); got != want {
			t.Errorf("Plain(%q) = %q, want %q", in, got, want)
		}
	}
}
