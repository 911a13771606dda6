package report

import (
	_ "embed"
	"fmt"
	"html/template"
	"io"
	"strconv"

	"surety/trainer"
)

// Input is what a report shows. Model is required; the rest may be nil or
// empty.
type Input struct {
	Model *trainer.Model
	// ModelPath names the model file in the page's heading.
	ModelPath string
	// Sweep, when not nil, adds the sweep's table, statement and plot.
	Sweep *trainer.SweepResult
	// SweepPath names the sweep's file or folder.
	SweepPath string
	// Check, when not nil, adds the check on fresh rows and its plot.
	Check *trainer.CheckResult
	// CheckPath names the fresh rows' file.
	CheckPath string
	// Monitor, when not nil, adds the monitoring ledger's history: its
	// table and plot. It must belong to Model.
	Monitor *trainer.MonitorLedger
	// MonitorPath names the ledger file.
	MonitorPath string
	// TopVoters is the number of heaviest voters listed as rules. Default
	// 10.
	TopVoters int
}

//go:embed report.html.tmpl
var pageText string

var page = template.Must(template.New("report").Parse(pageText))

// Write writes the report of in as one HTML page to w.
func Write(w io.Writer, in Input) error {
	if in.Model == nil || in.Model.Vote == nil {
		return fmt.Errorf("report: no model")
	}
	if in.TopVoters == 0 {
		in.TopVoters = 10
	}
	if in.TopVoters < 0 {
		return fmt.Errorf("report: top voters must be positive, got %d", in.TopVoters)
	}
	if in.Sweep != nil {
		if err := in.Sweep.Matches(in.Model); err != nil {
			return fmt.Errorf("report: %w", err)
		}
	}
	if in.Monitor != nil {
		if err := in.Monitor.Matches(in.Model, in.Monitor.Header.Delta); err != nil {
			return fmt.Errorf("report: %w", err)
		}
	}
	plots, err := Plots(in)
	if err != nil {
		return err
	}
	rd, err := ReadableOf(in.Model, in.TopVoters)
	if err != nil {
		return err
	}
	v := buildView(in, plots, rd)
	if err := page.Execute(w, v); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	return nil
}

// view is the page's data, every number already formatted.
type view struct {
	Title     string
	ModelPath string
	Tool      string

	Sentence     string
	BoundValue   string
	BoundPercent string
	Delta        string
	Confidence   string
	Family       string
	Vote         string
	Vacuous      bool
	// NoBetter is the warning for a certificate no better than the
	// majority guess; "" otherwise.
	NoBetter     string
	Meaning      []string
	Ledger       []ledgerRow
	PerClass     []classCertRow
	ClassNote    string
	Empirical    [][2]string
	Data         [][2]string
	Voters       []voterRow
	VotersShown  int
	VotersInPool int
	// LinearTerms is the number of coefficients a linear voter shows.
	LinearTerms int
	// Scales are column, mean and sd behind z(column).
	Scales         [][3]string
	Importance     []importanceRow
	MoreColumns    string // "3 more columns", "" for none
	ImportanceRule string
	ClassVotesRule string
	PlotOrder      []figure
	Check          *checkView
	Sweep          *sweepView
	Monitor        *monitorView
	Cautions       []string
}

type figure struct {
	ID, Title, Caption string
	SVG                template.HTML
}

// classCertRow is one class's certificate, or the cost certificate.
type classCertRow struct {
	Class, Rows, Errors, Delta, Value, Reason string
}

type ledgerRow struct {
	Name, Vote, Delta, Value, Reason string
	Chosen                           bool
}

// importanceRow is one column's share of the vote; Bar is the bar's width
// in percent of its cell.
type importanceRow struct {
	Column, Share, Bar string
}

type voterRow struct {
	Rank           int
	Weight, Share  string
	Rule, Kind     string
	CumulativeText string
}

type checkView struct {
	Path       string
	Verdict    string
	Consistent bool
	Summary    [][2]string
	Header     []string
	Confusion  []confusionRow
	PerClass   []classRow
	ClassDelta string
	Figure     *figure
}

type confusionRow struct {
	Class string
	Cells []string
}

type classRow struct {
	Class, Rows, Errors, Rate, Bound string
}

type sweepView struct {
	Path      string
	Statement string
	K         int
	Delta     string
	SelDelta  string
	HasTest   bool
	Rows      []sweepRow
	Figure    *figure
}

type sweepRow struct {
	Name, Cert, Family, SelCert, SelFamily, VoteError, KL, Heavy, Test string
	Selected                                                           bool
}

func fmtRate(x float64) string { return strconv.FormatFloat(100*x, 'f', 2, 64) + "%" }

func fmtNum(x float64) string { return strconv.FormatFloat(x, 'g', 6, 64) }

func buildView(in Input, plots []Plot, rd *Readable) view {
	m := in.Model
	c := m.Certificate
	p := m.Provenance
	v := view{
		Title:        "Surety report",
		ModelPath:    in.ModelPath,
		Tool:         m.ToolVersion,
		Sentence:     c.Sentence(),
		BoundValue:   strconv.FormatFloat(c.RiskBound, 'g', -1, 64),
		BoundPercent: trainer.Percent(c.RiskBound, true),
		Delta:        strconv.FormatFloat(c.Delta, 'g', -1, 64),
		Confidence:   trainer.Percent(1-c.Delta, false),
		Family:       c.Family,
		Vote:         c.Vote,
		Vacuous:      !(c.RiskBound < 1),
		NoBetter:     m.VacuousNote(),
		Cautions:     trainer.Cautions,
		VotersInPool: len(m.Vote.Voters),
	}
	v.Meaning = []string{
		fmt.Sprintf("The bound is on the error rate of this vote on new rows drawn from the same source as the training file. It holds with probability at least %s over the draw of the %d certify rows: a reader who repeats the whole procedure on fresh draws would find it wrong at most %s of the time.", v.Confidence, c.CertifyRows, trainer.Percent(c.Delta, true)),
		fmt.Sprintf("The pool of voters and the prior were built on %d separate prior rows; the certify rows only entered the weights and the bounds. Delta was split evenly over the %d families of the ledger, and the smallest bound, %s (%s), is the certificate.", p.PriorRows, len(c.Families), v.BoundPercent, c.Family),
	}
	if note := m.SweepNote(); note != "" {
		v.Meaning = append(v.Meaning, note)
	}
	for _, f := range c.Families {
		r := ledgerRow{Name: f.Name, Vote: f.Vote, Delta: fmtNum(f.Delta), Value: trainer.FormatBound(f.Value), Reason: f.Reason, Chosen: f.Name == c.Family}
		if f.Reason != "" {
			r.Value = "none"
		}
		v.Ledger = append(v.Ledger, r)
	}
	if pc := c.PerClass; pc != nil {
		v.ClassNote = fmt.Sprintf("One ledger line of delta %s covers every class: delta / %d for each of the %d classes, each computed over the %d votes the certificate could have shipped, so that all hold at once with the certificate.",
			fmtNum(pc.Delta), len(pc.Classes), len(pc.Classes), pc.CandidateVotes)
		for _, cb := range pc.Classes {
			r := classCertRow{Class: cb.Class, Rows: strconv.Itoa(cb.Rows), Errors: strconv.Itoa(cb.Errors), Delta: fmtNum(cb.Delta), Value: trainer.FormatBound(cb.Value), Reason: cb.Reason}
			if cb.Reason != "" {
				r.Value = "none"
			}
			v.PerClass = append(v.PerClass, r)
		}
		if cc := c.Cost; cc != nil {
			v.PerClass = append(v.PerClass, classCertRow{Class: "expected cost per row", Rows: strconv.Itoa(cc.Rows),
				Errors: "mean " + fmtNum(cc.MeanCost), Delta: fmtNum(cc.Delta), Value: fmtNum(cc.Value), Reason: cc.Reason})
		}
	}
	e := m.Empirical
	v.Empirical = [][2]string{
		{"certify rows (m)", strconv.Itoa(e.M)},
		{"vote error on the certify rows", fmtRate(e.VoteError)},
		{"Gibbs risk r(Q)", trainer.FormatFigure(e.GibbsRisk)},
		{"tandem risk t(Q)", trainer.FormatFigure(e.TandemRisk)},
	}
	if e.Disagreement != nil {
		v.Empirical = append(v.Empirical, [2]string{"disagreement d(Q)", trainer.FormatFigure(*e.Disagreement)})
	}
	v.Empirical = append(v.Empirical, [2]string{"KL(Q||P)", trainer.FormatFigure(e.KL)})

	objective := string(p.Objective)
	if p.Objective == trainer.Linear {
		objective += fmt.Sprintf(" (trade-off C = %g)", p.Tradeoff)
	}
	prior := string(p.Prior)
	if p.Prior == trainer.LearnedPrior {
		prior += fmt.Sprintf(" (uniform share %g)", p.PriorMix)
	}
	v.Data = [][2]string{
		{"source", p.Source},
		{"rows", strconv.Itoa(p.Rows)},
		{"label", fmt.Sprintf("%s, classes %v", m.Label, m.Classes)},
		{"feature columns", strconv.Itoa(len(m.Columns))},
		{"split", fmt.Sprintf("%d prior rows (fraction %g) build the pool and the prior; %d certify rows", p.PriorRows, p.PriorFraction, p.CertifyRows)},
		{"seed", strconv.FormatUint(p.Seed, 10)},
		{"pool", fmt.Sprintf("%d voters", p.PoolSize)},
		{"objective", objective},
		{"prior", prior},
		{"optimiser", fmt.Sprintf("from the %s start, value %s, %s", p.Optimizer.Start, fmtNum(p.Optimizer.Value), p.Optimizer.Summary())},
		{"data fingerprint", fmt.Sprintf("SHA-256 %s (%d records, %d fields)", p.Data.SHA256, p.Data.Rows, p.Data.Columns)},
		{"written by", "surety " + m.ToolVersion},
	}

	var run float64
	for i, r := range rd.Voters {
		run += r.Weight
		v.Voters = append(v.Voters, voterRow{Rank: i + 1, Weight: trainer.FormatFigure(r.Weight),
			CumulativeText: fmtRate(run), Rule: r.Short, Kind: r.Kind})
	}
	v.VotersShown = len(rd.Voters)
	v.LinearTerms = LinearTerms
	for _, s := range rd.Scales {
		v.Scales = append(v.Scales, [3]string{s.Column, strconv.FormatFloat(s.Mean, 'g', 4, 64), strconv.FormatFloat(s.SD, 'g', 4, 64)})
	}
	shown := rd.Importance[:min(in.TopVoters, len(rd.Importance))]
	for _, c := range shown {
		// The bar's length is the column's share of the heaviest column's,
		// so the list reads at a glance whatever the shares.
		v.Importance = append(v.Importance, importanceRow{Column: c.Column, Share: strconv.FormatFloat(100*c.Weight, 'f', 1, 64) + "%",
			Bar: strconv.FormatFloat(100*c.Weight/rd.Importance[0].Weight, 'f', 1, 64)})
	}
	if rest := len(rd.Importance) - len(shown); rest > 0 {
		v.MoreColumns = more(rest, "column", "columns")
	}
	v.ImportanceRule = rd.ImportanceRule
	v.ClassVotesRule = rd.ClassVotesRule

	if in.Check != nil {
		v.Check = buildCheck(in.Check, in.CheckPath)
	}
	if in.Sweep != nil {
		v.Sweep = buildSweep(in.Sweep, in.SweepPath)
	}
	if in.Monitor != nil {
		v.Monitor = buildMonitor(in.Monitor, in.MonitorPath)
	}
	for _, pl := range plots {
		// The SVG comes from gonum's canvas, which escapes every text it
		// draws, so it is safe to inline as markup.
		f := &figure{ID: pl.ID, Title: pl.Title, Caption: pl.Caption, SVG: template.HTML(pl.SVG)}
		switch pl.ID {
		case PlotCheck:
			v.Check.Figure = f
		case PlotSweep:
			v.Sweep.Figure = f
		case PlotHistory:
			v.Monitor.Figure = f
		default:
			v.PlotOrder = append(v.PlotOrder, *f)
		}
	}
	return v
}

func buildCheck(c *trainer.CheckResult, path string) *checkView {
	cv := &checkView{Path: path, Verdict: c.Verdict, Consistent: c.Consistent, ClassDelta: fmtNum(c.ClassDelta)}
	cv.Summary = [][2]string{
		{"fresh rows", strconv.Itoa(c.Rows)},
		{"errors (ties count)", strconv.Itoa(c.Errors)},
		{"error rate", fmtRate(c.ErrorRate)},
		{fmt.Sprintf("lower limit (delta %g)", c.Delta), trainer.Percent(c.Lower.Value, false)},
		{fmt.Sprintf("upper limit (delta %g)", c.Delta), trainer.Percent(c.Upper.Value, true)},
		{fmt.Sprintf("model's certificate (delta %g)", c.ModelDelta), trainer.Percent(c.ModelBound, true)},
	}
	if c.Population != nil {
		cv.Summary = append(cv.Summary, [2]string{fmt.Sprintf("error rate of the unlabelled rest of the population (delta %g)", c.Delta), trainer.Percent(c.Population.Value, true)})
	}
	k := 0
	if len(c.Confusion) > 0 {
		k = len(c.Confusion[0])
	}
	cv.Header = append(cv.Header, c.Classes[:k]...)
	cv.Header = append(cv.Header, "tie")
	for i, row := range c.Confusion {
		r := confusionRow{Class: c.Classes[i]}
		for _, n := range row {
			r.Cells = append(r.Cells, strconv.Itoa(n))
		}
		r.Cells = append(r.Cells, strconv.Itoa(c.Ties[i]))
		cv.Confusion = append(cv.Confusion, r)
	}
	for _, pc := range c.PerClass {
		cv.PerClass = append(cv.PerClass, classRow{Class: pc.Class, Rows: strconv.Itoa(pc.Rows), Errors: strconv.Itoa(pc.Errors),
			Rate: fmtRate(pc.ErrorRate), Bound: trainer.Percent(pc.Bound, true)})
	}
	return cv
}

func buildSweep(s *trainer.SweepResult, path string) *sweepView {
	sv := &sweepView{Path: path, Statement: s.Statement, K: s.K, Delta: fmtNum(s.Delta), SelDelta: fmtNum(s.SelectionDelta)}
	for i, r := range s.Rows {
		row := sweepRow{Name: r.Name, Cert: trainer.Percent(r.Certificate, true), Family: r.Family,
			SelCert: trainer.Percent(r.SelectionCertificate, true), SelFamily: r.SelectionFamily,
			VoteError: fmtRate(r.VoteError), KL: strconv.FormatFloat(r.KL, 'f', 3, 64), Heavy: strconv.Itoa(r.HeavyVoters),
			Selected: i == s.Selected}
		if r.Test != nil {
			sv.HasTest = true
			row.Test = fmt.Sprintf("%s (at most %s)", fmtRate(r.Test.ErrorRate), trainer.Percent(r.Test.Bound, true))
		}
		sv.Rows = append(sv.Rows, row)
	}
	return sv
}
