package trainer

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"math"
	"slices"
	"strings"

	"surety/objective"
)

// LedgerTolerance is how closely a recomputed bound, term or delta share
// must agree with the one a model file stores: 1e-9, relative to the
// value's size when that is above 1.
const LedgerTolerance = 1e-9

// Integrity is the content hash a model file carries: the SHA-256 of each
// part of its content in canonical form (the part's compact JSON as this
// package writes it: keys in the file's order, numbers in Go's shortest
// form that reads back to the same float64), and the SHA-256 of those
// part hashes, "name=hex" one per line in the order of Parts. It detects
// accidents and naive edits; anyone can recompute it after an edit, so it
// is no signature.
type Integrity struct {
	SHA256 string     `json:"sha256"`
	Parts  []PartHash `json:"parts"`
	Method string     `json:"method"`
}

// PartHash is one part's hash.
type PartHash struct {
	Part   string `json:"part"`
	SHA256 string `json:"sha256"`
}

// integrityMethod says in the file how the hash was made.
const integrityMethod = "sha256 of each part's compact JSON, then of the lines part=hash"

// integrityOf hashes m's content.
func integrityOf(m *Model) (Integrity, error) {
	var vote struct {
		Classes json.RawMessage `json:"classes"`
		Weights json.RawMessage `json:"weights"`
		Voters  json.RawMessage `json:"voters"`
	}
	vb, err := json.Marshal(m.Vote)
	if err != nil {
		return Integrity{}, err
	}
	if err := json.Unmarshal(vb, &vote); err != nil {
		return Integrity{}, err
	}
	parts := []struct {
		name string
		v    any
	}{
		{"label", m.Label},
		{"columns", m.Columns},
		{"vote.classes", vote.Classes},
		{"vote.weights", vote.Weights},
		{"vote.voters", vote.Voters},
		{"certificate", m.Certificate},
		{"empirical", m.Empirical},
		{"provenance", m.Provenance},
	}
	in := Integrity{Method: integrityMethod}
	var all strings.Builder
	for _, p := range parts {
		b, err := json.Marshal(p.v)
		if err != nil {
			return Integrity{}, fmt.Errorf("hashing %s: %w", p.name, err)
		}
		sum := sha256.Sum256(b)
		h := hex.EncodeToString(sum[:])
		in.Parts = append(in.Parts, PartHash{Part: p.name, SHA256: h})
		fmt.Fprintf(&all, "%s=%s\n", p.name, h)
	}
	sum := sha256.Sum256([]byte(all.String()))
	in.SHA256 = hex.EncodeToString(sum[:])
	return in, nil
}

// ContentHash returns the SHA-256 of m's content as a model file states
// it (Integrity.SHA256).
func (m *Model) ContentHash() (string, error) {
	in, err := integrityOf(m)
	return in.SHA256, err
}

// checkIntegrity compares the stored hash with m's content and names the
// parts that differ.
func checkIntegrity(stored *Integrity, m *Model) error {
	if stored == nil || stored.SHA256 == "" {
		return fmt.Errorf("the model file carries no content hash (integrity.sha256)")
	}
	got, err := integrityOf(m)
	if err != nil {
		return err
	}
	if got.SHA256 == stored.SHA256 {
		return nil
	}
	var changed []string
	for _, p := range got.Parts {
		i := slices.IndexFunc(stored.Parts, func(s PartHash) bool { return s.Part == p.Part })
		if i < 0 || stored.Parts[i].SHA256 != p.SHA256 {
			changed = append(changed, p.Part)
		}
	}
	if len(changed) == 0 {
		return fmt.Errorf("content hash mismatch: integrity.sha256 %s does not match the part hashes (%s)", short(stored.SHA256), short(got.SHA256))
	}
	return fmt.Errorf("content hash mismatch: %s changed after the file was written (sha256 %s, content gives %s)",
		strings.Join(changed, ", "), short(stored.SHA256), short(got.SHA256))
}

// agrees reports whether a stored number agrees with its recomputation.
func agrees(stored, got float64) bool {
	return math.Abs(stored-got) <= LedgerTolerance*math.Max(1, math.Abs(got))
}

// RecomputeBound redoes a stored bound's arithmetic from its own terms (m,
// KL, the empirical terms, delta) with the objective package's functions,
// by its name: first-order, tandem, c-bound, chebyshev-cantelli, test-set,
// mean-loss.
func RecomputeBound(b objective.Bound) (objective.Bound, error) {
	term := func(name string) (float64, error) {
		v, ok := b.Term(name)
		if !ok {
			return 0, fmt.Errorf("%s bound has no %s term", b.Name, name)
		}
		return v, nil
	}
	need := func(names ...string) ([]float64, error) {
		out := make([]float64, len(names))
		for i, n := range names {
			v, err := term(n)
			if err != nil {
				return nil, err
			}
			out[i] = v
		}
		return out, nil
	}
	count := func(x float64) (int, error) {
		if x != math.Trunc(x) || x < 0 || x > math.MaxInt32 {
			return 0, fmt.Errorf("%s bound: %v is not a count", b.Name, x)
		}
		return int(x), nil
	}
	switch b.Name {
	case "first-order":
		t, err := need("gibbs_risk")
		if err != nil {
			return b, err
		}
		return objective.FirstOrderBound(t[0], b.KL, b.M, b.Delta)
	case "tandem":
		t, err := need("tandem_risk")
		if err != nil {
			return b, err
		}
		return objective.TandemBound(t[0], b.KL, b.M, b.Delta)
	case "c-bound":
		t, err := need("gibbs_risk", "disagreement")
		if err != nil {
			return b, err
		}
		return objective.CBoundDisagreement(t[0], t[1], b.KL, b.M, b.Delta)
	case "chebyshev-cantelli":
		t, err := need("gibbs_risk", "tandem_risk")
		if err != nil {
			return b, err
		}
		return objective.ChebyshevCantelliBound(t[0], t[1], b.KL, b.M, b.Delta)
	case "test-set":
		t, err := need("errors", "n")
		if err != nil {
			return b, err
		}
		k, err := count(t[0])
		if err != nil {
			return b, err
		}
		n, err := count(t[1])
		if err != nil {
			return b, err
		}
		return objective.TestSetBound(k, n, b.Delta)
	case "mean-loss":
		t, err := need("mean", "n")
		if err != nil {
			return b, err
		}
		n, err := count(t[1])
		if err != nil {
			return b, err
		}
		return objective.MeanLossBound(t[0], n, b.Delta)
	}
	return b, fmt.Errorf("unknown bound %q", b.Name)
}

// diffBound names the first place where a stored bound and its
// recomputation differ, or returns "".
func diffBound(stored, got objective.Bound) string {
	switch {
	case stored.Name != got.Name || stored.Of != got.Of:
		return fmt.Sprintf("is a %s bound of %s, recomputed as %s of %s", stored.Name, stored.Of, got.Name, got.Of)
	case stored.M != got.M:
		return fmt.Sprintf("m %d, recomputed %d", stored.M, got.M)
	case !agrees(stored.Delta, got.Delta):
		return fmt.Sprintf("delta %v, recomputed %v", stored.Delta, got.Delta)
	case !agrees(stored.KL, got.KL):
		return fmt.Sprintf("KL %v, recomputed %v", stored.KL, got.KL)
	case len(stored.Terms) != len(got.Terms):
		return fmt.Sprintf("%d terms, recomputed %d", len(stored.Terms), len(got.Terms))
	}
	for i, t := range stored.Terms {
		g := got.Terms[i]
		if t.Name != g.Name || !agrees(t.Value, g.Value) {
			return fmt.Sprintf("term %s = %v, recomputed %s = %v", t.Name, t.Value, g.Name, g.Value)
		}
	}
	if !agrees(stored.Value, got.Value) {
		return fmt.Sprintf("value %v, recomputed %v", stored.Value, got.Value)
	}
	return ""
}
