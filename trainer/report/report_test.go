package report_test

import (
	"bytes"
	stdhtml "html"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"surety/trainer"
	"surety/trainer/report"
)

// render writes in's report and returns the page.
func render(t *testing.T, in report.Input) string {
	t.Helper()
	var b bytes.Buffer
	if err := report.Write(&b, in); err != nil {
		t.Fatal(err)
	}
	return b.String()
}

func TestWriteSections(t *testing.T) {
	full := fixture(t)
	modelOnly := report.Input{Model: full.Model, ModelPath: full.ModelPath}
	withCheck := modelOnly
	withCheck.Check, withCheck.CheckPath = full.Check, full.CheckPath
	withSweep := modelOnly
	withSweep.Sweep, withSweep.SweepPath = full.Sweep, full.SweepPath
	// A sweep of objectives that do not depend on C draws only
	// horizontal lines.
	flat := *full.Sweep
	flat.Rows = nil
	for _, r := range full.Sweep.Rows {
		if r.Setting.Objective != trainer.Linear {
			flat.Rows = append(flat.Rows, r)
		}
	}
	flat.K, flat.Selected = len(flat.Rows), 0
	noLinear := modelOnly
	noLinear.Sweep = &flat
	withLedger := modelOnly
	withLedger.Monitor, withLedger.MonitorPath = full.Monitor, full.MonitorPath
	emptyLedger := modelOnly
	emptyLedger.Monitor = &trainer.MonitorLedger{Header: full.Monitor.Header}
	cases := []struct {
		name    string
		in      report.Input
		present []string
		absent  []string
	}{
		{"sweep without linear rows", noLinear,
			[]string{`id="plot-sweep"`, "no linear setting"}, nil},
		{"model only", modelOnly,
			[]string{`id="certificate"`, `id="ledger-table"`, `id="data-table"`, `id="voters-table"`, `id="plot-weights"`, `id="plot-margins"`, `id="cautions"`, `id="meaning"`},
			[]string{`id="check"`, `id="sweep"`, `id="plot-check"`, `id="plot-sweep"`}},
		{"with check", withCheck,
			[]string{`id="check-verdict"`, `id="confusion"`, `id="per-class"`, `id="plot-check"`},
			[]string{`id="sweep"`, `id="plot-sweep"`}},
		{"with sweep", withSweep,
			[]string{`id="sweep-statement"`, `id="sweep-table"`, `id="plot-sweep"`, `class="selected"`},
			[]string{`id="check"`, `id="plot-check"`}},
		{"everything", full,
			[]string{`id="plot-weights"`, `id="plot-margins"`, `id="plot-check"`, `id="plot-sweep"`, `id="plot-history"`, "demo/fresh.csv", "demo/sweep", "demo/model.json",
				`id="monitor-table"`, "demo/ledger.jsonl", "demo/week6.csv", `class="drift"`},
			nil},
		{"with a ledger", withLedger,
			[]string{`id="monitor"`, `id="monitor-statement"`, `id="monitor-table"`, `id="plot-history"`, "2026-11-30T09:00:00Z"},
			[]string{`id="check"`, `id="sweep"`}},
		{"with an empty ledger", emptyLedger,
			[]string{`id="monitor"`, "holds no check yet"},
			[]string{`id="plot-history"`, `id="monitor-table"`}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			html := render(t, c.in)
			for _, s := range c.present {
				if !strings.Contains(html, s) {
					t.Errorf("the page lacks %s", s)
				}
			}
			for _, s := range c.absent {
				if strings.Contains(html, s) {
					t.Errorf("the page holds %s", s)
				}
			}
			if got, want := strings.Count(html, `<svg class="plot-svg"`), len(report.PlotIDs(c.in)); got != want {
				t.Errorf("%d plots in the page, PlotIDs lists %d", got, want)
			}
		})
	}
}

// The certificate's element carries the exact bound, and the page states
// the model's sentence, every ledger family and every caution.
func TestWriteContent(t *testing.T) {
	in := fixture(t)
	html := render(t, in)
	m := in.Model
	re := regexp.MustCompile(`id="certificate"[^>]*data-value="([^"]+)"`)
	sub := re.FindStringSubmatch(html)
	if sub == nil {
		t.Fatal("no certificate element with data-value")
	}
	v, err := strconv.ParseFloat(sub[1], 64)
	if err != nil || v != m.Certificate.RiskBound {
		t.Errorf("data-value %q, want %v", sub[1], m.Certificate.RiskBound)
	}
	want := []string{(m.Certificate.Sentence()), m.Provenance.Data.SHA256, (in.Sweep.Statement), (in.Check.Verdict)}
	for _, f := range m.Certificate.Families {
		want = append(want, `data-family="`+f.Name+`"`)
	}
	for _, c := range trainer.Cautions {
		want = append(want, (c))
	}
	rd, err := report.ReadableOf(m, 10)
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range rd.Voters {
		want = append(want, r.Short)
	}
	for _, c := range rd.Importance[:min(10, len(rd.Importance))] {
		want = append(want, `<td class="wrap">`+c.Column+`</td>`)
	}
	want = append(want, report.ImportanceRule)
	text := stdhtml.UnescapeString(html)
	for _, s := range want {
		if !strings.Contains(text, s) {
			t.Errorf("the page lacks %q", s)
		}
	}
}

// The page must read offline: no script, no linked style sheet, no source
// or link pointing out of the file, no remote url() in the style sheet.
// The only http strings allowed are the SVG and XLink namespace names,
// which are never fetched.
func TestWriteSelfContained(t *testing.T) {
	html := render(t, fixture(t))
	lower := strings.ToLower(html)
	for _, bad := range []string{"<script", "<link", "<iframe", "<img", "@import", "url(", "src="} {
		if strings.Contains(lower, bad) {
			t.Errorf("the page holds %q", bad)
		}
	}
	for _, m := range regexp.MustCompile(`href="([^"]*)"`).FindAllStringSubmatch(html, -1) {
		if !strings.HasPrefix(m[1], "#") {
			t.Errorf("link %q leaves the page", m[1])
		}
	}
	rest := strings.NewReplacer(`xmlns="http://www.w3.org/2000/svg"`, "", `xmlns:xlink="http://www.w3.org/1999/xlink"`, "").Replace(lower)
	for _, bad := range []string{"http://", "https://"} {
		if strings.Contains(rest, bad) {
			i := strings.Index(rest, bad)
			t.Errorf("the page refers to %s", rest[max(0, i-40):min(len(rest), i+60)])
		}
	}
	if strings.Contains(html, "<?xml") {
		t.Error("an XML prolog was left inside the HTML")
	}
}

// The same input gives the same bytes, plots included.
func TestWriteDeterministic(t *testing.T) {
	in := fixture(t)
	first := render(t, in)
	for i := range 3 {
		if again := render(t, in); again != first {
			t.Fatalf("render %d differs from the first", i+2)
		}
	}
	plots, err := report.Plots(in)
	if err != nil {
		t.Fatal(err)
	}
	again, err := report.Plots(in)
	if err != nil {
		t.Fatal(err)
	}
	for i := range plots {
		if !bytes.Equal(plots[i].SVG, again[i].SVG) {
			t.Errorf("plot %s differs between two renders", plots[i].ID)
		}
	}
	if dir := os.Getenv("SURETY_REPORT_DIR"); dir != "" {
		path := filepath.Join(dir, "demo-report.html")
		if err := os.WriteFile(path, []byte(first), 0o644); err != nil {
			t.Fatal(err)
		}
		t.Logf("report written to %s", path)
	}
}

func TestPlotIDs(t *testing.T) {
	full := fixture(t)
	noMargins := *full.Model
	noMargins.Empirical.Margins = nil
	cases := []struct {
		name string
		in   report.Input
		want []string
	}{
		{"model only", report.Input{Model: full.Model}, []string{report.PlotWeights, report.PlotMargins}},
		{"model without margins", report.Input{Model: &noMargins}, []string{report.PlotWeights}},
		{"everything", full, []string{report.PlotWeights, report.PlotMargins, report.PlotCheck, report.PlotSweep, report.PlotHistory}},
		{"empty ledger", report.Input{Model: full.Model, Monitor: &trainer.MonitorLedger{Header: full.Monitor.Header}}, []string{report.PlotWeights, report.PlotMargins}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			got := report.PlotIDs(c.in)
			if strings.Join(got, ",") != strings.Join(c.want, ",") {
				t.Errorf("got %v, want %v", got, c.want)
			}
		})
	}
}

// Odd inputs are errors, not panics.
func TestWriteBadInput(t *testing.T) {
	full := fixture(t)
	nanCheck := *full.Check
	nanCheck.ModelBound = 1 / zero()
	badSweep := *full.Sweep
	badSweep.Rows = append([]trainer.SweepRow(nil), full.Sweep.Rows...)
	for i := range badSweep.Rows {
		if badSweep.Rows[i].Setting.Objective == trainer.Linear {
			badSweep.Rows[i].Setting.Tradeoff = 0
			break
		}
	}
	otherLedger := *full.Monitor
	otherLedger.Header.Model.SHA256 = strings.Repeat("0", 64)
	nanLedger := *full.Monitor
	nanLedger.Entries = append([]trainer.MonitorEntry(nil), full.Monitor.Entries...)
	nanLedger.Entries[0].Upper = 1 / zero()
	cases := []struct {
		name string
		in   report.Input
	}{
		{"no model", report.Input{}},
		{"infinite model bound in the check", report.Input{Model: full.Model, Check: &nanCheck}},
		{"linear row with no trade-off", report.Input{Model: full.Model, Sweep: &badSweep}},
		{"negative top voters", report.Input{Model: full.Model, TopVoters: -1}},
		{"a ledger of another model", report.Input{Model: full.Model, Monitor: &otherLedger}},
		{"a ledger with an infinite limit", report.Input{Model: full.Model, Monitor: &nanLedger}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if err := report.Write(&bytes.Buffer{}, c.in); err == nil {
				t.Error("no error")
			}
		})
	}
}

func zero() float64 { return 0 }

// A certificate no better than always answering the majority class is
// flagged in the warning style; a useful one is not.
func TestWriteNoBetterThanGuessing(t *testing.T) {
	in := fixture(t)
	if html := render(t, in); strings.Contains(html, `id="certificate-no-better"`) {
		t.Fatal("the fixture's certificate is flagged as no better than guessing")
	}
	m := *in.Model
	g, ok := m.MajorityGuess()
	if !ok {
		t.Fatal("the fixture holds no class counts")
	}
	m.Certificate.RiskBound = g.Error
	// The edited model is another model: the fixture's monitoring ledger,
	// which names the original, would be refused.
	in.Model, in.Monitor = &m, nil
	html := render(t, in)
	if !strings.Contains(html, `class="certificate vacuous"`) || !strings.Contains(stdhtml.UnescapeString(html), m.VacuousNote()) {
		t.Error("the page does not flag a certificate at the majority guess's error")
	}
}
