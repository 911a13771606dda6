package report

import (
	"bytes"
	"cmp"
	"fmt"
	"image/color"
	"math"
	"slices"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"

	"surety/trainer"
)

// The plots a report may hold, by id (also the id of their HTML figure).
const (
	PlotWeights = "plot-weights"
	PlotMargins = "plot-margins"
	PlotCheck   = "plot-check"
	PlotSweep   = "plot-sweep"
	PlotHistory = "plot-history"
)

// Plot is one figure of a report.
type Plot struct {
	// ID is one of the Plot* constants.
	ID      string
	Title   string
	Caption string
	// SVG is the drawing, an <svg> element ready to inline in HTML (no XML
	// prolog).
	SVG []byte
}

// PlotIDs lists the plots Write draws for in, in page order: the weights
// always, the margins when the model records them, the check and the sweep
// when given, and the monitoring history when the ledger holds a check.
func PlotIDs(in Input) []string {
	var ids []string
	if in.Model != nil {
		ids = append(ids, PlotWeights)
		if in.Model.Empirical.Margins != nil {
			ids = append(ids, PlotMargins)
		}
	}
	if in.Check != nil {
		ids = append(ids, PlotCheck)
	}
	if in.Sweep != nil {
		ids = append(ids, PlotSweep)
	}
	if in.Monitor != nil && len(in.Monitor.Entries) > 0 {
		ids = append(ids, PlotHistory)
	}
	return ids
}

// Plots draws every plot PlotIDs lists.
func Plots(in Input) ([]Plot, error) {
	var out []Plot
	for _, id := range PlotIDs(in) {
		var p Plot
		var err error
		switch id {
		case PlotWeights:
			p, err = WeightsPlot(in.Model)
		case PlotMargins:
			p, err = MarginsPlot(in.Model.Empirical.Margins)
		case PlotCheck:
			p, err = CheckPlot(in.Check)
		case PlotSweep:
			p, err = SweepPlot(in.Sweep)
		case PlotHistory:
			p, err = HistoryPlot(in.Monitor)
		}
		if err != nil {
			return nil, err
		}
		out = append(out, p)
	}
	return out, nil
}

// Page sizes of the drawings, in points; the page scales them to its
// column width.
const (
	plotWidth  vg.Length = 600
	plotHeight vg.Length = 260
)

// A plain sans face: gonum carries Liberation Sans inside its module, so
// layout needs no system font; the page names metric-compatible fallbacks
// for browsers that lack it.
var plainFont = font.Font{Typeface: "Liberation", Variant: "Sans"}

func face(size vg.Length) font.Font {
	f := plainFont
	f.Size = size
	return f
}

// newPlot is a plot with the plain font everywhere and light grid lines.
func newPlot(title, x, y string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.Title.TextStyle.Font = face(11.5)
	p.X.Label.Text = x
	p.Y.Label.Text = y
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = face(10.5)
		a.Tick.Label.Font = face(9.5)
	}
	p.Legend.TextStyle.Font = face(9.5)
	g := plotter.NewGrid()
	g.Vertical.Color = color.Gray{Y: 225}
	g.Horizontal.Color = color.Gray{Y: 225}
	p.Add(g)
	return p
}

// Colours of our own choosing, told apart in grey print by their dashes.
var (
	inkBlue   = color.RGBA{R: 0x1f, G: 0x4e, B: 0x79, A: 0xff}
	inkOrange = color.RGBA{R: 0xc0, G: 0x5a, B: 0x12, A: 0xff}
	inkGreen  = color.RGBA{R: 0x2e, G: 0x7d, B: 0x32, A: 0xff}
	inkPurple = color.RGBA{R: 0x6a, G: 0x3d, B: 0x9a, A: 0xff}
	inkGrey   = color.RGBA{R: 0x55, G: 0x55, B: 0x55, A: 0xff}
	inkRed    = color.RGBA{R: 0xb0, G: 0x24, B: 0x1f, A: 0xff}
	inkBlack  = color.RGBA{A: 0xff}
	palette   = []color.Color{inkBlue, inkOrange, inkGreen, inkPurple, inkGrey, inkRed}
	dashes    = [][]vg.Length{nil, {vg.Points(6), vg.Points(3)}, {vg.Points(2), vg.Points(2)}, {vg.Points(8), vg.Points(2), vg.Points(2), vg.Points(2)}}
)

func ink(i int) color.Color { return palette[i%len(palette)] }

// render draws onto an SVG canvas and returns the <svg> element. gonum's
// plot panics on some inputs (a log axis over a non-positive range, for
// one); render turns that into an error, since a report must not crash on
// an odd model.
func render(id string, w, h vg.Length, drawFn func(dc draw.Canvas) error) (svg []byte, err error) {
	defer func() {
		if r := recover(); r != nil {
			err = fmt.Errorf("report: drawing %s: %v", id, r)
		}
	}()
	c := vgsvg.New(w, h)
	if err := drawFn(draw.New(c)); err != nil {
		return nil, fmt.Errorf("report: drawing %s: %w", id, err)
	}
	var b bytes.Buffer
	if _, err := c.WriteTo(&b); err != nil {
		return nil, fmt.Errorf("report: drawing %s: %w", id, err)
	}
	out := b.Bytes()
	// The XML prolog and comment do not belong inside HTML.
	i := bytes.Index(out, []byte("<svg"))
	if i < 0 {
		return nil, fmt.Errorf("report: drawing %s: the canvas wrote no <svg> element", id)
	}
	out = out[i:]
	attrs := fmt.Sprintf(`<svg class="plot-svg" data-plot=%q role="img"`, id)
	return append([]byte(attrs), out[len("<svg"):]...), nil
}

// legendShare is the share of a wide drawing's width given to its legend.
const legendShare = 0.34

// drawWithLegend draws p on the left of dc and the legend on the right, so
// that many entries never hide the lines.
func drawWithLegend(dc draw.Canvas, p *plot.Plot, add func(l *plot.Legend)) {
	w := dc.Max.X - dc.Min.X
	split := w * (1 - legendShare)
	p.Draw(draw.Crop(dc, 0, split-w, 0, 0))
	l := plot.NewLegend()
	l.TextStyle.Font = face(9.5)
	l.Top, l.Left = true, true
	l.Padding = vg.Points(3.5)
	l.ThumbnailWidth = vg.Points(26)
	add(&l)
	l.Draw(draw.Crop(dc, split+vg.Points(8), 0, 0, -vg.Points(10)))
}

func lineOf(xys plotter.XYs, c color.Color, dash []vg.Length, width float64) (*plotter.Line, error) {
	l, err := plotter.NewLine(xys)
	if err != nil {
		return nil, err
	}
	l.Color = c
	l.Dashes = dash
	l.Width = vg.Points(width)
	return l, nil
}

func pointsOf(xys plotter.XYs, c color.Color, shape draw.GlyphDrawer, r float64) (*plotter.Scatter, error) {
	s, err := plotter.NewScatter(xys)
	if err != nil {
		return nil, err
	}
	s.Color = c
	s.Shape = shape
	s.Radius = vg.Points(r)
	return s, nil
}

// hline is a horizontal line at y across the plot's x range.
func hline(y float64, c color.Color, dash []vg.Length) *plotter.Function {
	f := plotter.NewFunction(func(float64) float64 { return y })
	f.Color = c
	f.Dashes = dash
	f.Width = vg.Points(1.2)
	f.Samples = 2
	return f
}

// whisker is the legend icon of error bars, which gonum draws none for.
type whisker struct{ draw.LineStyle }

func (w whisker) Thumbnail(c *draw.Canvas) {
	x := (c.Min.X + c.Max.X) / 2
	cap := (c.Max.Y - c.Min.Y) / 3
	c.StrokeLine2(w.LineStyle, x, c.Min.Y, x, c.Max.Y)
	c.StrokeLine2(w.LineStyle, x-cap, c.Min.Y, x+cap, c.Min.Y)
	c.StrokeLine2(w.LineStyle, x-cap, c.Max.Y, x+cap, c.Max.Y)
}

// wholeTicks are gonum's default ticks labelled as whole numbers, for
// counts.
type wholeTicks struct{}

func (wholeTicks) Ticks(min, max float64) []plot.Tick {
	ts := plot.DefaultTicks{}.Ticks(min, max)
	for i := range ts {
		if ts[i].Label != "" {
			ts[i].Label = strconv.FormatFloat(ts[i].Value, 'f', -1, 64)
		}
	}
	return ts
}

func finite(what string, xs ...float64) error {
	for _, x := range xs {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return fmt.Errorf("%s is %v", what, x)
		}
	}
	return nil
}

// WeightsPlot draws the shipped vote's weights sorted from the heaviest,
// and their running sum: how many voters carry the vote.
func WeightsPlot(m *trainer.Model) (Plot, error) {
	w := slices.Clone(m.Vote.Weights)
	slices.SortFunc(w, func(a, b float64) int { return cmp.Compare(b, a) })
	sorted := make(plotter.XYs, len(w))
	cum := make(plotter.XYs, len(w))
	var run float64
	for i, x := range w {
		run += x
		sorted[i] = plotter.XY{X: float64(i + 1), Y: x}
		cum[i] = plotter.XY{X: float64(i + 1), Y: run}
	}
	heavy := trainer.HeavyVoters(w)
	svg, err := render(PlotWeights, plotWidth, plotHeight-40, func(dc draw.Canvas) error {
		left := newPlot("Weights, heaviest first", "voter rank", "weight")
		l, err := lineOf(sorted, inkBlue, nil, 1.2)
		if err != nil {
			return err
		}
		l.FillColor = color.NRGBA{R: 0x1f, G: 0x4e, B: 0x79, A: 0x40}
		left.Add(l)
		left.Y.Min, left.X.Min = 0, 0
		if len(w) <= 60 {
			s, err := pointsOf(sorted, inkBlue, draw.CircleGlyph{}, 1.6)
			if err != nil {
				return err
			}
			left.Add(s)
		}
		right := newPlot("Cumulative weight", "number of heaviest voters", "share of the vote")
		c, err := lineOf(cum, inkOrange, nil, 1.4)
		if err != nil {
			return err
		}
		right.Add(c, hline(1, inkGrey, dashes[2]))
		right.Y.Min, right.Y.Max = 0, 1.05
		right.X.Min = 0
		tiles := draw.Tiles{Rows: 1, Cols: 2, PadX: vg.Points(18), PadTop: vg.Points(4), PadBottom: vg.Points(4), PadLeft: vg.Points(4), PadRight: vg.Points(8)}
		canvases := plot.Align([][]*plot.Plot{{left, right}}, tiles, dc)
		left.Draw(canvases[0][0])
		right.Draw(canvases[0][1])
		return nil
	})
	if err != nil {
		return Plot{}, err
	}
	return Plot{ID: PlotWeights, Title: "Weight distribution of the vote", SVG: svg,
		Caption: fmt.Sprintf("%d voters in the pool; %d carry more than %s of the weight each.", len(w), heavy, trainer.Percent(trainer.HeavyWeight, false))}, nil
}

// MarginsPlot draws the shipped vote's signed margins on the certify rows:
// bars left of zero are rows the vote gets wrong (ties included, in the
// bar just below zero).
func MarginsPlot(h *trainer.Histogram) (Plot, error) {
	if h == nil || len(h.Counts) == 0 || !(h.Hi > h.Lo) {
		return Plot{}, fmt.Errorf("report: drawing %s: no margin histogram", PlotMargins)
	}
	if err := finite("the margin range", h.Lo, h.Hi); err != nil {
		return Plot{}, fmt.Errorf("report: drawing %s: %w", PlotMargins, err)
	}
	width := (h.Hi - h.Lo) / float64(len(h.Counts))
	var wrong, right []plotter.HistogramBin
	total, errs, peak := 0, 0, 0
	for i, n := range h.Counts {
		lo := h.Lo + float64(i)*width
		b := plotter.HistogramBin{Min: lo, Max: lo + width, Weight: float64(n)}
		total += n
		peak = max(peak, n)
		if lo+width/2 < 0 {
			wrong = append(wrong, b)
			errs += n
		} else {
			right = append(right, b)
		}
	}
	svg, err := render(PlotMargins, plotWidth, plotHeight, func(dc draw.Canvas) error {
		p := newPlot("", "signed margin (winning weight minus runner-up, negative where the vote is wrong)", "certify rows")
		hw := &plotter.Histogram{Bins: wrong, Width: width, FillColor: inkRed, LineStyle: draw.LineStyle{Color: color.White, Width: vg.Points(0.5)}}
		hr := &plotter.Histogram{Bins: right, Width: width, FillColor: inkBlue, LineStyle: draw.LineStyle{Color: color.White, Width: vg.Points(0.5)}}
		top := math.Max(1, float64(peak)*1.05)
		zero, err := lineOf(plotter.XYs{{X: 0, Y: 0}, {X: 0, Y: top}}, inkBlack, dashes[1], 1.2)
		if err != nil {
			return err
		}
		p.Add(hw, hr, zero)
		p.X.Min, p.X.Max = h.Lo, h.Hi
		p.Y.Min, p.Y.Max = 0, top
		p.Y.Tick.Marker = wholeTicks{}
		drawWithLegend(dc, p, func(l *plot.Legend) {
			l.Add("vote right", hr)
			l.Add("vote wrong (ties: bar below 0)", hw)
			l.Add("margin 0", zero)
		})
		return nil
	})
	if err != nil {
		return Plot{}, err
	}
	return Plot{ID: PlotMargins, Title: "Margin distribution on the certify rows", SVG: svg,
		Caption: fmt.Sprintf("%d certify rows in %d bins over [%g, %g]; %d rows left of zero (errors and ties).", total, len(h.Counts), h.Lo, h.Hi, errs)}, nil
}

// CheckPlot draws the fresh rows' error rate with its two one-sided limits
// (each at the check's delta), each class's error rate with its upper
// bound, and the model's certificate as a line.
func CheckPlot(c *trainer.CheckResult) (Plot, error) {
	if err := finite("a check figure", c.ErrorRate, c.Lower.Value, c.Upper.Value, c.ModelBound); err != nil {
		return Plot{}, fmt.Errorf("report: drawing %s: %w", PlotCheck, err)
	}
	names := []string{"all fresh rows"}
	pts := plotter.XYs{{X: 0, Y: c.ErrorRate}}
	bars := plotter.YErrors{{Low: c.ErrorRate - c.Lower.Value, High: c.Upper.Value - c.ErrorRate}}
	top := math.Max(c.Upper.Value, c.ModelBound)
	for i, pc := range c.PerClass {
		if err := finite("a class figure", pc.ErrorRate, pc.Bound); err != nil {
			return Plot{}, fmt.Errorf("report: drawing %s: %w", PlotCheck, err)
		}
		names = append(names, "class "+pc.Class)
		pts = append(pts, plotter.XY{X: float64(i + 1), Y: pc.ErrorRate})
		bars = append(bars, struct{ Low, High float64 }{0, pc.Bound - pc.ErrorRate})
		top = math.Max(top, pc.Bound)
	}
	svg, err := render(PlotCheck, plotWidth, plotHeight-20, func(dc draw.Canvas) error {
		p := newPlot("", "", "error rate")
		eb, err := errorBars(pts, bars, inkBlue, 1.6, 14)
		if err != nil {
			return err
		}
		dots, err := pointsOf(pts, inkBlue, draw.CircleGlyph{}, 3.5)
		if err != nil {
			return err
		}
		cert := hline(c.ModelBound, inkOrange, dashes[1])
		p.Add(cert, eb, dots)
		p.NominalX(names...)
		p.X.Min, p.X.Max = -0.5, float64(len(names))-0.5
		p.Y.Min, p.Y.Max = 0, math.Min(1, top*1.15+0.005)
		drawWithLegend(dc, p, func(l *plot.Legend) {
			l.Add("observed error rate", dots)
			l.Add(fmt.Sprintf("all rows: limits at δ = %g each", c.Delta), whisker{eb.LineStyle})
			l.Add(fmt.Sprintf("a class: upper bound at δ = %.3g", c.ClassDelta))
			l.Add("the model's certificate", cert)
		})
		return nil
	})
	if err != nil {
		return Plot{}, err
	}
	return Plot{ID: PlotCheck, Title: "Fresh rows against the certificate", SVG: svg,
		Caption: fmt.Sprintf("%d fresh rows, %d errors. The whiskers of all rows run from the lower to the upper one-sided limit, each at delta %g; a class's whisker is its upper bound at delta %.3g. The dashed line is the model's certificate, %s.",
			c.Rows, c.Errors, c.Delta, c.ClassDelta, trainer.Percent(c.ModelBound, true))}, nil
}

// SweepPlot draws, for the linear objective, the certificate at delta / K
// (solid), at delta (dashed) and the vote's error on the certify rows
// (dotted) against the trade-off C on a log axis, one colour per prior;
// the other objectives, which do not depend on C, are horizontal lines at
// their certificate at delta / K.
func SweepPlot(s *trainer.SweepResult) (Plot, error) {
	type series struct {
		prior          trainer.PriorKind
		sel, cert, err plotter.XYs
	}
	var lin []*series
	var refs []trainer.SweepRow
	var cs []float64
	for _, r := range s.Rows {
		if err := finite("a sweep figure of "+r.Name, r.Certificate, r.SelectionCertificate, r.VoteError); err != nil {
			return Plot{}, fmt.Errorf("report: drawing %s: %w", PlotSweep, err)
		}
		if r.Setting.Objective != trainer.Linear {
			refs = append(refs, r)
			continue
		}
		if !(r.Setting.Tradeoff > 0) {
			return Plot{}, fmt.Errorf("report: drawing %s: %s has trade-off %g, not positive", PlotSweep, r.Name, r.Setting.Tradeoff)
		}
		i := slices.IndexFunc(lin, func(x *series) bool { return x.prior == r.Setting.Prior })
		if i < 0 {
			lin = append(lin, &series{prior: r.Setting.Prior})
			i = len(lin) - 1
		}
		c := r.Setting.Tradeoff
		lin[i].sel = append(lin[i].sel, plotter.XY{X: c, Y: r.SelectionCertificate})
		lin[i].cert = append(lin[i].cert, plotter.XY{X: c, Y: r.Certificate})
		lin[i].err = append(lin[i].err, plotter.XY{X: c, Y: r.VoteError})
		if !slices.Contains(cs, c) {
			cs = append(cs, c)
		}
	}
	slices.Sort(cs)
	byX := func(a, b plotter.XY) int { return cmp.Compare(a.X, b.X) }
	selected := s.Rows[s.Selected]
	svg, err := render(PlotSweep, plotWidth, plotHeight+40, func(dc draw.Canvas) error {
		xlabel := "trade-off C of the linear objective (log scale)"
		if len(cs) == 0 {
			xlabel = "trade-off C (this sweep has no linear setting)"
		}
		p := newPlot("", xlabel, "error rate")
		p.X.Scale = plot.LogScale{}
		ticks := make([]plot.Tick, len(cs))
		for i, c := range cs {
			ticks[i] = plot.Tick{Value: c, Label: strconv.FormatFloat(c, 'g', -1, 64)}
		}
		p.X.Tick.Marker = plot.ConstantTicks(ticks)
		type entry struct {
			name  string
			thumb plot.Thumbnailer
		}
		var entries []entry
		top := 0.0
		for i, sr := range lin {
			for _, xs := range []plotter.XYs{sr.sel, sr.cert, sr.err} {
				slices.SortFunc(xs, byX)
				for _, pt := range xs {
					top = math.Max(top, pt.Y)
				}
			}
			col := ink(i)
			sel, err := lineOf(sr.sel, col, nil, 1.8)
			if err != nil {
				return err
			}
			cert, err := lineOf(sr.cert, col, dashes[1], 1.2)
			if err != nil {
				return err
			}
			ve, err := lineOf(sr.err, col, dashes[2], 1.2)
			if err != nil {
				return err
			}
			dots, err := pointsOf(sr.sel, col, draw.CircleGlyph{}, 2)
			if err != nil {
				return err
			}
			p.Add(sel, dots, cert, ve)
			entries = append(entries,
				entry{fmt.Sprintf("linear, %s: bound at δ/K", sr.prior), sel},
				entry{fmt.Sprintf("linear, %s: bound at δ", sr.prior), cert},
				entry{fmt.Sprintf("linear, %s: vote error", sr.prior), ve})
		}
		for j, r := range refs {
			top = math.Max(top, r.SelectionCertificate)
			f := hline(r.SelectionCertificate, ink(len(lin)+j), dashes[3])
			p.Add(f)
			name := fmt.Sprintf("%s, %s: bound at δ/K", r.Setting.Objective, r.Setting.Prior)
			entries = append(entries, entry{name, f})
		}
		if selected.Setting.Objective == trainer.Linear {
			ring, err := pointsOf(plotter.XYs{{X: selected.Setting.Tradeoff, Y: selected.SelectionCertificate}}, inkBlack, draw.RingGlyph{}, 6)
			if err != nil {
				return err
			}
			p.Add(ring)
			entries = append(entries, entry{"selected: " + selected.Name, ring})
		} else {
			entries = append(entries, entry{"selected: " + selected.Name, nil})
		}
		if len(cs) == 0 {
			p.X.Min, p.X.Max = 0.1, 10
			p.X.Tick.Marker = plot.LogTicks{Prec: -1}
		} else if cs[0] == cs[len(cs)-1] {
			p.X.Min, p.X.Max = cs[0]/2, cs[0]*2
		}
		p.Y.Min, p.Y.Max = 0, math.Min(1.02, top*1.1+0.01)
		drawWithLegend(dc, p, func(l *plot.Legend) {
			for _, e := range entries {
				if e.thumb == nil {
					l.Add(e.name)
				} else {
					l.Add(e.name, e.thumb)
				}
			}
		})
		return nil
	})
	if err != nil {
		return Plot{}, err
	}
	return Plot{ID: PlotSweep, Title: "Certificate and error against the trade-off", SVG: svg,
		Caption: fmt.Sprintf("%d settings. Solid: the certificate at delta / K = %.4g, true for a setting picked after the sweep; dashed: at delta = %g, true only for a setting fixed in advance; dotted: the vote's error on the certify rows. Horizontal lines: objectives that do not depend on C.", s.K, s.SelectionDelta, s.Delta)}, nil
}

// errorBars draws a vertical bar from pts[i].Y - bars[i].Low to
// pts[i].Y + bars[i].High at each point, lines width points wide and caps
// capWidth points across.
func errorBars(pts plotter.XYs, bars plotter.YErrors, c color.Color, width, capWidth float64) (*plotter.YErrorBars, error) {
	eb, err := plotter.NewYErrorBars(struct {
		plotter.XYs
		plotter.YErrors
	}{pts, bars})
	if err != nil {
		return nil, err
	}
	eb.Color = c
	eb.Width = vg.Points(width)
	eb.CapWidth = vg.Points(capWidth)
	return eb, nil
}
