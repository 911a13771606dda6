package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"surety/trainer"
)

func TestVersion(t *testing.T) {
	for _, arg := range []string{"--version", "version"} {
		t.Run(arg, func(t *testing.T) {
			out, errs, code := runSurety(t, "", arg)
			if code != 0 || out != "surety "+trainer.Version+"\n" || errs != "" {
				t.Errorf("exit %d, stdout %q, stderr %q", code, out, errs)
			}
		})
	}
}

// Every line of the command listing is a command or its continuation,
// indented: none wraps to column 0 (bound's summary spans lines).
func TestHelpListing(t *testing.T) {
	out, _, _ := runSurety(t, "", "--help")
	_, list, ok := strings.Cut(out, "commands:\n")
	if !ok {
		t.Fatalf("no command listing:\n%s", out)
	}
	list, _, _ = strings.Cut(list, "\n\n")
	for _, line := range strings.Split(list, "\n") {
		if !strings.HasPrefix(line, "  ") || len(line) > 100 {
			t.Errorf("listing line %q", line)
		}
	}
}

// One rule for output files: every command creates their missing folder,
// as sweep --out-dir does.
func TestOutputFolderCreated(t *testing.T) {
	dir := t.TempDir()
	data := filepath.Join("testdata", "misread", "stray_class.csv")
	model := filepath.Join(dir, "new", "model.json")
	steps := []struct {
		name string
		args []string
		file string
	}{
		{"train", []string{"train", "--data", data, "--out", model, "--linear-voters", "0"}, model},
		{"predict", []string{"predict", "--model", model, "--data", data, "--out", filepath.Join(dir, "p", "out.csv")}, filepath.Join(dir, "p", "out.csv")},
		{"report", []string{"report", "--model", model, "--out", filepath.Join(dir, "r", "report.html")}, filepath.Join(dir, "r", "report.html")},
		{"export", []string{"export", "--model", model, "--format", "sql", "--out", filepath.Join(dir, "e", "vote.sql")}, filepath.Join(dir, "e", "vote.sql")},
	}
	for _, s := range steps {
		t.Run(s.name, func(t *testing.T) {
			_, errs, code := runSurety(t, "", s.args...)
			if code != 0 {
				t.Fatalf("exit %d: %s", code, errs)
			}
			if _, err := os.Stat(s.file); err != nil {
				t.Error(err)
			}
		})
	}
}
