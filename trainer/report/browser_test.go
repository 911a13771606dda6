package report_test

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"surety/trainer"
	"surety/trainer/report"
)

// chromiumPath is where Debian's chromium package puts the browser.
const chromiumPath = "/usr/bin/chromium"

// pageFacts is what the browser test reads from the rendered page.
type pageFacts struct {
	Value       string  `json:"value"`
	BoundText   string  `json:"boundText"`
	Sentence    string  `json:"sentence"`
	Plots       []box   `json:"plots"`
	Resources   int     `json:"resources"`
	ScrollWidth float64 `json:"scrollWidth"`
	ViewWidth   float64 `json:"viewWidth"`
	// Scrolled names the voter, scale and importance tables wider than
	// their scrolling wrap (which the page's scrollWidth does not see).
	Scrolled []string `json:"scrolled"`
	// Bars counts the importance bars drawn with a width.
	Bars int `json:"bars"`
}

type box struct {
	ID     string  `json:"id"`
	Width  float64 `json:"width"`
	Height float64 `json:"height"`
}

const readPage = `(() => {
  const c = document.getElementById("certificate");
  const plots = [...document.querySelectorAll("figure.plot")].map(f => {
    const s = f.querySelector("svg");
    const r = s ? s.getBoundingClientRect() : {width: 0, height: 0};
    return {id: f.id, width: r.width, height: r.height};
  });
  return {
    value: c ? c.dataset.value : "",
    boundText: c ? document.getElementById("certificate-bound").innerText : "",
    sentence: c ? document.getElementById("certificate-sentence").innerText : "",
    plots: plots,
    resources: performance.getEntriesByType("resource").length,
    scrollWidth: document.documentElement.scrollWidth,
    viewWidth: window.innerWidth,
    scrolled: ["voters-table", "scales-table", "importance-table"].filter(id => {
      const t = document.getElementById(id);
      return t && t.parentElement.scrollWidth > t.parentElement.clientWidth;
    }),
    bars: [...document.querySelectorAll("#importance-table .bar")].filter(b => b.getBoundingClientRect().width > 0).length,
  };
})()`

// TestReportInBrowser opens the demo report in headless Chromium and
// checks the rendered page: the certificate's value equals the model's,
// every plot is drawn with a size, nothing was fetched, and nothing runs
// off the side at a laptop's width. It saves a screenshot of the whole
// page. With CI=true a browser that cannot start fails the test; elsewhere
// a missing browser skips it.
func TestReportInBrowser(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a browser; CI runs it without -short")
	}
	ci := os.Getenv("CI") == "true"
	if _, err := os.Stat(chromiumPath); err != nil {
		if ci {
			t.Fatalf("CI=true and no browser: %v (.ci/run installs the chromium package)", err)
		}
		t.Skipf("no browser at %s (apt-get install chromium)", chromiumPath)
	}
	in := fixture(t)
	dir := t.TempDir()
	page := filepath.Join(dir, "report.html")
	f, err := os.Create(page)
	if err != nil {
		t.Fatal(err)
	}
	if err := report.Write(f, in); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}

	// The closed network here makes Chromium hang on its background
	// services unless they are all turned off.
	opts := []chromedp.ExecAllocatorOption{
		chromedp.ExecPath(chromiumPath),
		chromedp.Headless,
		chromedp.NoSandbox,
		chromedp.DisableGPU,
		chromedp.NoFirstRun,
		chromedp.NoDefaultBrowserCheck,
		chromedp.Flag("disable-quic", true),
		chromedp.Flag("disable-background-networking", true),
		chromedp.Flag("disable-component-update", true),
		chromedp.Flag("disable-sync", true),
		chromedp.Flag("disable-dev-shm-usage", true),
		chromedp.UserDataDir(filepath.Join(dir, "profile")),
		chromedp.WindowSize(1280, 800),
	}
	ctx, cancel := context.WithTimeout(context.Background(), 90*time.Second)
	defer cancel()
	actx, cancelAlloc := chromedp.NewExecAllocator(ctx, opts...)
	defer cancelAlloc()
	bctx, cancelBrowser := chromedp.NewContext(actx)
	defer cancelBrowser()

	fail := func(what string, err error) {
		t.Helper()
		if errors.Is(err, context.DeadlineExceeded) {
			t.Fatalf("%s: the browser did not answer in time: %v", what, err)
		}
		t.Fatalf("%s with %s: %v", what, chromiumPath, err)
	}
	if err := chromedp.Do(bctx, chromedp.Navigate("file://"+page), chromedp.WaitReady(chromedp.CSS("#certificate"))); err != nil {
		fail("opening the report", err)
	}
	facts, err := chromedp.Run(bctx, chromedp.Evaluate[pageFacts](readPage))
	if err != nil {
		fail("reading the page", err)
	}
	shot, err := chromedp.Run(bctx, chromedp.FullScreenshot(100))
	if err != nil {
		fail("taking a screenshot", err)
	}

	want := in.Model.Certificate.RiskBound
	if v, err := strconv.ParseFloat(facts.Value, 64); err != nil || v != want {
		t.Errorf("certificate data-value %q, want %v", facts.Value, want)
	}
	if pct := trainer.Percent(want, true); !strings.Contains(facts.BoundText, pct) || !strings.Contains(facts.Sentence, pct) {
		t.Errorf("the rendered certificate does not show %s: %q / %q", pct, facts.BoundText, facts.Sentence)
	}
	ids := report.PlotIDs(in)
	if len(facts.Plots) != len(ids) {
		t.Errorf("%d plots rendered, want %d (%v)", len(facts.Plots), len(ids), ids)
	}
	for i, p := range facts.Plots {
		if i < len(ids) && p.ID != ids[i] {
			t.Errorf("plot %d is %q, want %q", i, p.ID, ids[i])
		}
		if !(p.Width > 100 && p.Height > 50) {
			t.Errorf("plot %s rendered at %.0f x %.0f px", p.ID, p.Width, p.Height)
		}
	}
	if facts.Resources != 0 {
		t.Errorf("the page fetched %d resources, want none", facts.Resources)
	}
	if facts.ScrollWidth > facts.ViewWidth {
		t.Errorf("the page is %.0f px wide in a %.0f px window: something overflows", facts.ScrollWidth, facts.ViewWidth)
	}
	if len(facts.Scrolled) > 0 {
		t.Errorf("tables wider than the page at 1280 px: %v", facts.Scrolled)
	}
	if facts.Bars == 0 {
		t.Error("no importance bar drawn")
	}
	png := filepath.Join(dir, "report.png")
	if err := os.WriteFile(png, shot, 0o644); err != nil {
		t.Fatal(err)
	}
	t.Logf("screenshot: %s (%d bytes)", png, len(shot))
	if keep := os.Getenv("SURETY_REPORT_DIR"); keep != "" {
		if err := os.WriteFile(filepath.Join(keep, "report.png"), shot, 0o644); err != nil {
			t.Fatal(err)
		}
	}
}
