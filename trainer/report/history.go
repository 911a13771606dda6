package report

import (
	"fmt"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg/draw"

	"surety/trainer"
)

// monitorView is the page's section on a monitoring ledger.
type monitorView struct {
	Path      string
	Statement string
	Rows      []monitorRow
	Figure    *figure
}

type monitorRow struct {
	Check                                          int
	Time, Source, Rows, Errors, Rate, Lower, Upper string
	Delta, Verdict                                 string
	Drift                                          bool
}

func buildMonitor(l *trainer.MonitorLedger, path string) *monitorView {
	mv := &monitorView{Path: path, Statement: trainer.MonitorStatement(l.Header.Delta) +
		fmt.Sprintf(" Method: %s, each check's limits being binomial test-set limits (Langford 2005) on its own rows.", l.Header.Method)}
	for _, e := range l.Entries {
		r := monitorRow{Check: e.Check, Time: e.Time, Source: e.Source, Rows: strconv.Itoa(e.Rows), Errors: strconv.Itoa(e.Errors),
			Rate: fmtRate(e.ErrorRate), Lower: trainer.Percent(e.Lower, false), Upper: trainer.Percent(e.Upper, true),
			Delta: fmtNum(e.Delta), Verdict: "consistent", Drift: !e.Consistent}
		if r.Drift {
			r.Verdict = "drift"
		}
		if e.RepeatOf != 0 {
			r.Verdict += fmt.Sprintf(" (rows of check %d)", e.RepeatOf)
		}
		mv.Rows = append(mv.Rows, r)
	}
	return mv
}

// HistoryPlot draws a monitoring ledger's checks in order: each check's
// error rate with its lower and upper limits (each at its delta_k / 2),
// checks with a drift verdict in red, and the model's certificate as a
// dashed line.
func HistoryPlot(l *trainer.MonitorLedger) (Plot, error) {
	if l == nil || len(l.Entries) == 0 {
		return Plot{}, fmt.Errorf("report: drawing %s: the ledger holds no check", PlotHistory)
	}
	bound := l.Header.Model.RiskBound
	if err := finite("the certificate", bound); err != nil {
		return Plot{}, fmt.Errorf("report: drawing %s: %w", PlotHistory, err)
	}
	var pts, ok, drift plotter.XYs
	var bars plotter.YErrors
	top, drifts := bound, 0
	for _, e := range l.Entries {
		if err := finite(fmt.Sprintf("check %d's figure", e.Check), e.ErrorRate, e.Lower, e.Upper); err != nil {
			return Plot{}, fmt.Errorf("report: drawing %s: %w", PlotHistory, err)
		}
		pt := plotter.XY{X: float64(e.Check), Y: e.ErrorRate}
		pts = append(pts, pt)
		bars = append(bars, struct{ Low, High float64 }{e.ErrorRate - e.Lower, e.Upper - e.ErrorRate})
		if e.Consistent {
			ok = append(ok, pt)
		} else {
			drift = append(drift, pt)
			drifts++
		}
		top = math.Max(top, e.Upper)
	}
	n := len(l.Entries)
	svg, err := render(PlotHistory, plotWidth, plotHeight, func(dc draw.Canvas) error {
		p := newPlot("", "check number (in the ledger's order)", "error rate")
		eb, err := errorBars(pts, bars, inkGrey, 1.4, math.Min(10, 300/float64(n)))
		if err != nil {
			return err
		}
		cert := hline(bound, inkOrange, dashes[1])
		p.Add(cert, eb)
		var okDots, driftDots *plotter.Scatter
		if len(ok) > 0 {
			if okDots, err = pointsOf(ok, inkBlue, draw.CircleGlyph{}, 3); err != nil {
				return err
			}
			p.Add(okDots)
		}
		if len(drift) > 0 {
			if driftDots, err = pointsOf(drift, inkRed, draw.PyramidGlyph{}, 4); err != nil {
				return err
			}
			p.Add(driftDots)
		}
		p.X.Min, p.X.Max = 0.5, float64(n)+0.5
		p.X.Tick.Marker = wholeTicks{}
		p.Y.Min, p.Y.Max = 0, math.Min(1.02, top*1.1+0.01)
		drawWithLegend(dc, p, func(lg *plot.Legend) {
			if okDots != nil {
				lg.Add("error rate, consistent", okDots)
			}
			if driftDots != nil {
				lg.Add("error rate, drift", driftDots)
			}
			lg.Add("limits at δ_k / 2 each", whisker{eb.LineStyle})
			lg.Add("the model's certificate", cert)
		})
		return nil
	})
	if err != nil {
		return Plot{}, err
	}
	return Plot{ID: PlotHistory, Title: "Checks of the monitoring ledger against the certificate", SVG: svg,
		Caption: fmt.Sprintf("%d checks, %d with a drift verdict (lower limit above the certificate). Check k's whisker runs from its lower to its upper limit, each at delta_k / 2 with delta_k = %g * 6 / (pi^2 k^2), so that all of them hold at once with probability at least %s; later checks spend less and their whiskers widen. The dashed line is the model's certificate, %s.",
			n, drifts, l.Header.Delta, trainer.Percent(1-l.Header.Delta, false), trainer.Percent(bound, true))}, nil
}
