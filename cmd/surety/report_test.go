package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"surety/datasets/demodata"
	"surety/trainer"
)

// reportFiles trains a small model on demo rows, runs a small sweep, and
// writes fresh rows, all in dir.
func reportFiles(t *testing.T, dir string) (model, sweepDir, fresh string) {
	t.Helper()
	data := demoFile(t, dir, 1000)
	model = filepath.Join(dir, "model.json")
	if _, errs, code := runSurety(t, "", "train", "--data", data, "--label", demodata.Label, "--out", model, "--linear-voters", "2", "--thresholds", "8"); code != 0 {
		t.Fatalf("train exit %d: %s", code, errs)
	}
	sweepDir = filepath.Join(dir, "sweep")
	if _, errs, code := runSurety(t, "", "sweep", "--data", data, "--label", demodata.Label, "--objective", "linear,tandem",
		"--tradeoff", "0.3,3", "--prior", "learned", "--linear-voters", "2", "--thresholds", "8", "--out-dir", sweepDir); code != 0 {
		t.Fatalf("sweep exit %d: %s", code, errs)
	}
	var b bytes.Buffer
	if err := demodata.Write(&b, demodata.Config{Rows: 400}, 77); err != nil {
		t.Fatal(err)
	}
	fresh = filepath.Join(dir, "fresh.csv")
	if err := os.WriteFile(fresh, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	return model, sweepDir, fresh
}

func TestReportCommand(t *testing.T) {
	dir := t.TempDir()
	model, sweepDir, fresh := reportFiles(t, dir)
	m, err := trainer.ReadModelFile(model)
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "report.html")
	other := filepath.Join(dir, "other.json") // trained on other rows than the sweep's
	if _, errs, code := runSurety(t, "", "train", "--data", fresh, "--label", demodata.Label, "--out", other, "--linear-voters", "2", "--thresholds", "8"); code != 0 {
		t.Fatalf("train exit %d: %s", code, errs)
	}
	// A ledger of two checks of this model, and one of the other model.
	ledger := filepath.Join(dir, "ledger.jsonl")
	otherLedger := filepath.Join(dir, "other-ledger.jsonl")
	for i, seed := range []uint64{78, 79} {
		week := demoRows(t, dir, fmt.Sprintf("week%d.csv", i+1), demodata.Config{Rows: 300}, seed)
		if _, errs, code := runSurety(t, "", "check", "--model", model, "--data", week, "--ledger", ledger, "--time", fmt.Sprintf("2026-11-0%d", 2+i)); code != 0 {
			t.Fatalf("check exit %d: %s", code, errs)
		}
		if i == 0 {
			if _, errs, code := runSurety(t, "", "check", "--model", other, "--data", week, "--ledger", otherLedger, "--time", "2026-11-02"); code != 0 {
				t.Fatalf("check exit %d: %s", code, errs)
			}
		}
	}
	cases := []struct {
		name  string
		args  []string
		code  int
		plots []string
	}{
		{"model only", []string{"--model", model}, 0, []string{"plot-weights", "plot-margins"}},
		{"with a ledger", []string{"--model", model, "--ledger", ledger}, 0, []string{"plot-weights", "plot-margins", "plot-history"}},
		{"ledger of another model", []string{"--model", model, "--ledger", otherLedger}, 1, nil},
		{"missing ledger", []string{"--model", model, "--ledger", filepath.Join(dir, "nowhere.jsonl")}, 1, nil},
		{"with check and sweep folder", []string{"--model", model, "--check", fresh, "--sweep", sweepDir}, 0,
			[]string{"plot-weights", "plot-margins", "plot-check", "plot-sweep"}},
		{"sweep.json named", []string{"--model", model, "--sweep", filepath.Join(sweepDir, "sweep.json")}, 0,
			[]string{"plot-weights", "plot-margins", "plot-sweep"}},
		{"no model", []string{}, 2, nil},
		{"bad delta", []string{"--model", model, "--check", fresh, "--delta", "1.5"}, 2, nil},
		{"missing sweep", []string{"--model", model, "--sweep", filepath.Join(dir, "nowhere")}, 1, nil},
		{"missing check file", []string{"--model", model, "--check", filepath.Join(dir, "nowhere.csv")}, 1, nil},
		{"not a model", []string{"--model", fresh}, 1, nil},
		{"sweep of other data", []string{"--model", other, "--sweep", sweepDir}, 1, nil},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			os.Remove(out)
			args := append([]string{"report", "--out", out, "--json"}, c.args...)
			stdout, stderr, code := runSurety(t, "", args...)
			if code != c.code {
				t.Fatalf("exit %d, want %d: %s", code, c.code, stderr)
			}
			if c.code != 0 {
				if _, err := os.Stat(out); err == nil {
					t.Error("a failed run wrote a report")
				}
				return
			}
			var rep reportJSON
			if err := json.Unmarshal([]byte(stdout), &rep); err != nil {
				t.Fatalf("--json: %v\n%s", err, stdout)
			}
			if rep.ReportPath != out || strings.Join(rep.Plots, ",") != strings.Join(c.plots, ",") {
				t.Errorf("got %+v, want path %s and plots %v", rep, out, c.plots)
			}
			page, err := os.ReadFile(out)
			if err != nil {
				t.Fatal(err)
			}
			sub := regexp.MustCompile(`id="certificate"[^>]*data-value="([^"]+)"`).FindSubmatch(page)
			if sub == nil {
				t.Fatal("no certificate in the page")
			}
			if v, err := strconv.ParseFloat(string(sub[1]), 64); err != nil || v != m.Certificate.RiskBound {
				t.Errorf("certificate %s in the page, model says %v", sub[1], m.Certificate.RiskBound)
			}
			for _, id := range c.plots {
				if !bytes.Contains(page, []byte(`id="`+id+`"`)) {
					t.Errorf("the page lacks %s", id)
				}
			}
		})
	}
}

// The text output says where the report went and which plots it holds.
func TestReportText(t *testing.T) {
	dir := t.TempDir()
	model, _, _ := reportFiles(t, dir)
	out := filepath.Join(dir, "r.html")
	stdout, stderr, code := runSurety(t, "", "report", "--model", model, "--out", out)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if want := "report written to " + out + " (2 plots: [plot-weights plot-margins])\n"; stdout != want {
		t.Errorf("got %q, want %q", stdout, want)
	}
}
