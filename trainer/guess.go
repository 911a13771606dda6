package trainer

import "fmt"

// Guess is the plainest rival of a vote: always answer the class that most
// certify rows hold. A certificate at or above its error rate shows nothing
// the guess does not.
type Guess struct {
	// Class is the majority class of the certify rows (the first in class
	// order on a tie).
	Class string `json:"class"`
	// Error is the share of certify rows of any other class.
	Error float64 `json:"error"`
	// Rows is the number of certify rows it is measured on.
	Rows int `json:"rows"`
}

// MajorityGuess returns the guess of always answering the majority class,
// measured on the certify rows whose class counts the per-class
// certificates hold. The class counts of the prior rows would serve as
// well but are not kept in the model file; the certify rows' counts are,
// so show and report, which have only the model, judge it the same way
// train does. ok is false for a model without per-class certificates.
func (m *Model) MajorityGuess() (g Guess, ok bool) {
	pc := m.Certificate.PerClass
	if pc == nil || len(pc.Classes) == 0 {
		return Guess{}, false
	}
	best, rows := -1, 0
	for i, cb := range pc.Classes {
		rows += cb.Rows
		if best < 0 || cb.Rows > pc.Classes[best].Rows {
			best = i
		}
	}
	if rows == 0 {
		return Guess{}, false
	}
	b := pc.Classes[best]
	return Guess{Class: b.Class, Error: float64(rows-b.Rows) / float64(rows), Rows: rows}, true
}

// Vacuous reports whether the certificate is no better than the majority
// guess: its bound at or above the guess's error rate on the certify rows
// (or 1 or more). Such a certificate is true but shows nothing a vote
// without any column would not.
func (m *Model) Vacuous() bool {
	if !(m.Certificate.RiskBound < 1) {
		return true
	}
	g, ok := m.MajorityGuess()
	return ok && m.Certificate.RiskBound >= g.Error
}

// VacuousNote says why a vacuous certificate is no better than guessing;
// "" when it is better (or when the model holds no class counts).
func (m *Model) VacuousNote() string {
	g, ok := m.MajorityGuess()
	if !m.Vacuous() || !ok {
		return ""
	}
	return fmt.Sprintf("Warning: this certificate is no better than guessing: always answering %q, the majority class, errs on %s of the %d certify rows, and the bound (%s) is not below that.",
		g.Class, Percent(g.Error, false), g.Rows, Percent(m.Certificate.RiskBound, true))
}
