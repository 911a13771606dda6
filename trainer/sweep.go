package trainer

import (
	"context"
	"fmt"
	"slices"

	"surety/datasets"
)

// Grid lists the settings of a sweep: every objective with every prior,
// and for the linear objective every trade-off too. The other objectives'
// bounds do not contain the trade-off (it only places some of the
// optimiser's starting points), so they get one setting each, at C = 1:
// trying them at several trade-offs would spend delta on near-copies.
// Duplicates are dropped; the order is objectives, then priors, then
// trade-offs, as given.
func Grid(objectives []Objective, tradeoffs []float64, priors []PriorKind) []Setting {
	var out []Setting
	for _, o := range objectives {
		for _, p := range priors {
			cs := tradeoffs
			if o != Linear || len(cs) == 0 {
				cs = []float64{1}
			}
			for _, c := range cs {
				s := Setting{Objective: o, Tradeoff: c, Prior: p}
				if !slices.Contains(out, s) {
					out = append(out, s)
				}
			}
		}
	}
	return out
}

// SweepRow is one setting's line of a sweep.
type SweepRow struct {
	Setting Setting `json:"setting"`
	Name    string  `json:"name"`
	// Certificate and Family are the setting's own certificate at the
	// sweep's delta: true for a setting chosen before the sweep was run.
	Certificate float64 `json:"certificate"`
	Family      string  `json:"family"`
	// SelectionCertificate and SelectionFamily are recomputed at delta / K,
	// so that all K hold at once with probability 1 - delta: true for a
	// setting chosen after seeing the sweep.
	SelectionCertificate float64 `json:"selection_certificate"`
	SelectionFamily      string  `json:"selection_family"`
	// VoteError is the shipped vote's error rate on the certify rows.
	VoteError float64 `json:"vote_error"`
	KL        float64 `json:"kl"`
	// HeavyVoters counts the voters of the shipped vote with weight > 1%.
	HeavyVoters int `json:"heavy_voters"`
	// Test is the setting's check on a test file, filled by CheckOn.
	Test *TestLine `json:"test,omitempty"`
	// ModelFile is the model's file name in the sweep folder, filled by
	// WriteSweepDir.
	ModelFile string `json:"model_file,omitempty"`
}

// TestLine is a vote's error on labelled test rows with its test-set bound
// at Delta (one setting at a time: not corrected for the sweep).
type TestLine struct {
	Rows      int     `json:"rows"`
	Errors    int     `json:"errors"`
	ErrorRate float64 `json:"error_rate"`
	Bound     float64 `json:"bound"`
	Delta     float64 `json:"delta"`
}

// HeavyWeight is the weight above which a voter counts in
// SweepRow.HeavyVoters.
const HeavyWeight = 0.01

// SweepResult is a sweep over K settings of one prepared table.
type SweepResult struct {
	// Data is the fingerprint of the table swept, and Label its label.
	Data  datasets.Fingerprint `json:"data"`
	Label string               `json:"label"`
	Delta float64              `json:"delta"`
	// K is the number of settings; SelectionDelta is Delta / K.
	K              int        `json:"settings"`
	SelectionDelta float64    `json:"selection_delta"`
	Rows           []SweepRow `json:"rows"`
	// Selected indexes the row with the smallest SelectionCertificate (the
	// first on a tie).
	Selected int `json:"selected"`
	// Statement says in plain words what the selected certificate means.
	Statement string `json:"statement"`
	// Models holds each setting's model, certified at Delta, in row order.
	Models []*Model `json:"-"`
	// SelectedModel is the selected setting's model re-certified at
	// SelectionDelta, shipping the vote of the family that wins there.
	SelectedModel *Model `json:"-"`
}

// Sweep fits every setting on the same split, pool and statistics, and
// selects honestly: every certificate is recomputed at delta / K and the
// smallest of those is the selection, valid with probability 1 - delta
// although it was picked after seeing all K (a union bound over the K
// settings, FIELD-GUIDE.md "Honest accounting" 3).
func (p *Prepared) Sweep(ctx context.Context, settings []Setting) (*SweepResult, error) {
	if len(settings) == 0 {
		return nil, fmt.Errorf("trainer: sweep: no settings")
	}
	for _, s := range settings {
		cfg := p.cfg
		cfg.Objective, cfg.Tradeoff, cfg.Prior = s.Objective, s.Tradeoff, s.Prior
		if err := cfg.withDefaults().validate(len(p.t.Classes)); err != nil {
			return nil, fmt.Errorf("trainer: sweep: setting %s: %w", s, err)
		}
	}
	k := len(settings)
	res := &SweepResult{Data: p.t.Fingerprint, Label: p.t.LabelName, Delta: p.cfg.Delta, K: k, SelectionDelta: p.cfg.Delta / float64(k)}
	// Only the selected setting's fit is kept: its votes and margins are
	// what re-certifying it needs, and the others' are m rows each.
	var best *fitted
	var bestCert Certificate
	for i, s := range settings {
		f, err := p.fit(ctx, s)
		if err != nil {
			return nil, fmt.Errorf("trainer: sweep: setting %s: %w", s, err)
		}
		cert, err := certify(res.SelectionDelta, f.emp, f.held(), len(p.t.Classes), p.cfg.Family, p.extraLines())
		if err != nil {
			return nil, fmt.Errorf("trainer: sweep: setting %s: %w", s, err)
		}
		m := f.model
		row := SweepRow{
			Setting: s, Name: s.String(),
			Certificate: m.Certificate.RiskBound, Family: m.Certificate.Family,
			SelectionCertificate: cert.RiskBound, SelectionFamily: cert.Family,
			VoteError: m.Empirical.VoteError, KL: m.Empirical.KL,
			HeavyVoters: HeavyVoters(m.Vote.Weights),
		}
		m.Provenance.SweepSettings = k
		res.Rows = append(res.Rows, row)
		res.Models = append(res.Models, m)
		if best == nil || cert.RiskBound < bestCert.RiskBound {
			best, bestCert, res.Selected = f, cert, i
		}
	}
	sel, err := p.recertifyAs(best, bestCert)
	if err != nil {
		return nil, err
	}
	sel.Certificate.Delta = p.cfg.Delta
	res.SelectedModel = sel
	row := res.Rows[res.Selected]
	if k == 1 {
		// One setting is no choice: delta / 1 is delta.
		res.Statement = fmt.Sprintf("One setting, %s, was fitted; its certificate is %s at delta = %g.",
			row.Name, Percent(row.SelectionCertificate, true), p.cfg.Delta)
	} else {
		res.Statement = fmt.Sprintf("Of %d settings, %s has the smallest certificate. Because it was chosen after seeing all %d, its certificate is recomputed at delta / %d = %.4g: %s (at delta = %g alone it would be %s, which holds only for a setting fixed in advance).",
			k, row.Name, k, k, res.SelectionDelta, Percent(row.SelectionCertificate, true), p.cfg.Delta, Percent(row.Certificate, true))
	}
	return res, nil
}

// recertify certifies a fit again at delta d, as a sweep's selection is
// (a copy of its model, marked selected), shipping the vote the winning
// family certifies there.
func (p *Prepared) recertify(f *fitted, d float64) (*Model, error) {
	cert, err := certify(d, f.emp, f.held(), len(p.t.Classes), p.cfg.Family, p.extraLines())
	if err != nil {
		return nil, fmt.Errorf("trainer: %w", err)
	}
	return p.recertifyAs(f, cert)
}

func (p *Prepared) recertifyAs(f *fitted, cert Certificate) (*Model, error) {
	sel := *f.model
	g := *f
	g.model = &sel
	if err := g.ship(p, cert); err != nil {
		return nil, err
	}
	sel.Provenance.SweepSelected = true
	return &sel, nil
}

// Sweep prepares t with cfg and sweeps the settings.
func Sweep(ctx context.Context, t *datasets.Table, cfg Config, settings []Setting) (*SweepResult, error) {
	p, err := Prepare(ctx, t, cfg)
	if err != nil {
		return nil, err
	}
	return p.Sweep(ctx, settings)
}

// HeavyVoters counts the weights above HeavyWeight.
func HeavyVoters(w []float64) int {
	n := 0
	for _, x := range w {
		if x > HeavyWeight {
			n++
		}
	}
	return n
}

// Matches reports an error unless m was trained on the data r swept.
func (r *SweepResult) Matches(m *Model) error {
	if r.Data != m.Provenance.Data || r.Label != m.Label {
		return fmt.Errorf("trainer: the sweep is of other data (sha256 %s, label %q) than the model (sha256 %s, label %q)",
			short(r.Data.SHA256), r.Label, short(m.Provenance.Data.SHA256), m.Label)
	}
	return nil
}

func short(h string) string { return h[:min(len(h), 12)] }
