package trainer

import (
	"bytes"
	"context"
	"encoding/json"
	"strings"
	"testing"

	"surety/voters"
)

// editModel decodes a model file into plain JSON values, applies f and
// encodes it again, as a person editing the file by hand would.
func editModel(t *testing.T, good []byte, f func(map[string]any)) []byte {
	t.Helper()
	var v map[string]any
	if err := json.Unmarshal(good, &v); err != nil {
		t.Fatal(err)
	}
	f(v)
	b, err := json.MarshalIndent(v, "", "  ")
	if err != nil {
		t.Fatal(err)
	}
	return b
}

func obj(v any, keys ...string) map[string]any {
	m := v.(map[string]any)
	for _, k := range keys {
		m = m[k].(map[string]any)
	}
	return m
}

func list(v any, key string) []any { return v.(map[string]any)[key].([]any) }

// Every edit of the acceptance list, and a few more, is refused with one
// line that names what disagrees; the untouched file passes.
func TestDecodeRefusesEdits(t *testing.T) {
	tab := demoTable(t, 800, 2)
	m, err := Train(context.Background(), tab, Config{Seed: 1, Pool: voters.PoolConfig{Thresholds: 8, LinearVoters: intp(4)}})
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := EncodeModel(&buf, m); err != nil {
		t.Fatal(err)
	}
	good := buf.Bytes()
	cases := []struct {
		name string
		edit func(map[string]any)
		want string // "" for a file that must pass
	}{
		{"untouched", func(map[string]any) {}, ""},
		{"certificate value", func(v map[string]any) { obj(v, "certificate")["risk_bound"] = 0.001 }, "risk_bound 0.001 is not its ledger's smallest value"},
		{"certificate family", func(v map[string]any) { obj(v, "certificate")["family"] = "tandem" }, `names family "tandem"`},
		{"ledger value", func(v map[string]any) { list(obj(v, "certificate"), "families")[1].(map[string]any)["value"] = 0.01 }, "family tandem: value 0.01, but its terms give"},
		{"ledger term", func(v map[string]any) {
			terms := list(obj(list(obj(v, "certificate"), "families")[0], "terms"), "terms")
			terms[0].(map[string]any)["value"] = 0.001
		}, "family first-order: term"},
		{"ledger delta", func(v map[string]any) { list(obj(v, "certificate"), "families")[0].(map[string]any)["delta"] = 0.05 }, "family first-order: delta share 0.05"},
		{"stated delta", func(v map[string]any) { obj(v, "certificate")["delta"] = 0.01 }, "delta share"},
		{"deleted certificate", func(v map[string]any) { delete(v, "certificate") }, "missing or empty"},
		{"deleted ledger", func(v map[string]any) { obj(v, "certificate")["families"] = []any{} }, "missing or empty"},
		{"per-class value", func(v map[string]any) {
			list(obj(v, "certificate", "per_class"), "classes")[0].(map[string]any)["value"] = 0.0001
		}, "class leak: value 0.0001"},
		{"per-class deleted", func(v map[string]any) { delete(obj(v, "certificate"), "per_class") }, "per-class: missing"},
		{"changed threshold", func(v map[string]any) {
			for _, vr := range list(obj(v, "vote"), "voters") {
				if x, ok := vr.(map[string]any)["threshold"]; ok {
					vr.(map[string]any)["threshold"] = x.(float64) + 1
					return
				}
			}
			t.Fatal("no stump")
		}, "content hash mismatch: vote.voters changed"},
		{"changed weight", func(v map[string]any) {
			w := list(obj(v, "vote"), "weights")
			// Move mass between two voters: the weights stay on the simplex.
			i := 0
			for w[i].(float64) < 0.01 {
				i++
			}
			j := (i + 1) % len(w)
			w[i], w[j] = w[i].(float64)-0.005, w[j].(float64)+0.005
		}, "content hash mismatch: vote.weights changed"},
		{"changed class name", func(v map[string]any) { list(obj(v, "vote"), "classes")[1] = "fine" }, "are not the model's"},
		{"changed schema", func(v map[string]any) {
			list(v, "columns")[0].(map[string]any)["name"] = "renamed"
		}, "is not in the model's schema"},
		{"changed label", func(v map[string]any) { v["label"] = "other" }, "content hash mismatch: label changed"},
		{"changed seed", func(v map[string]any) { obj(v, "provenance")["seed"] = 7 }, "content hash mismatch: provenance changed"},
		{"deleted hash", func(v map[string]any) { delete(v, "integrity") }, "carries no content hash"},
		{"format 2", func(v map[string]any) { v["surety_model_format"] = 2 }, "train the model again"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := DecodeModel(bytes.NewReader(editModel(t, good, c.edit)))
			switch {
			case c.want == "" && err != nil:
				t.Fatalf("refused: %v", err)
			case c.want == "":
			case err == nil:
				t.Fatal("accepted")
			case !strings.Contains(err.Error(), c.want):
				t.Errorf("error %q does not say %q", err, c.want)
			case strings.Contains(err.Error(), "\n"):
				t.Errorf("error spans lines: %q", err)
			}
		})
	}
}

// Encoding, decoding and encoding again gives the same bytes, so the hash
// of a read file is the hash it was written with (common practice, no
// source: Go's encoding/json writes the shortest form that reads back to
// the same float64).
func TestModelRoundTripKeepsHash(t *testing.T) {
	tab := demoTable(t, 600, 3)
	costs := &CostMatrix{Classes: []string{"sound", "leak"}, Costs: [][]float64{{0, 1}, {5, 0}}}
	m, err := Train(context.Background(), tab, Config{Seed: 2, Costs: costs, Pool: voters.PoolConfig{Thresholds: 4, LinearVoters: intp(2)}})
	if err != nil {
		t.Fatal(err)
	}
	var a, b bytes.Buffer
	if err := EncodeModel(&a, m); err != nil {
		t.Fatal(err)
	}
	back, err := DecodeModel(bytes.NewReader(a.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	if err := EncodeModel(&b, back); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(a.Bytes(), b.Bytes()) {
		t.Error("a decoded model encodes to other bytes")
	}
	h1, _ := m.ContentHash()
	h2, _ := back.ContentHash()
	if h1 != h2 || len(h1) != 64 {
		t.Errorf("hashes %q and %q", h1, h2)
	}
}

// RecomputeBound gives back each bound function's own value (the stored
// terms are the function's inputs).
func TestRecomputeBoundMatchesLedger(t *testing.T) {
	tab := demoTable(t, 600, 4)
	for _, fam := range []string{"", FamilyTandem, FamilyCBound} {
		m, err := Train(context.Background(), tab, Config{Seed: 3, Family: fam, Pool: voters.PoolConfig{Thresholds: 4, LinearVoters: intp(2)}})
		if err != nil {
			t.Fatal(err)
		}
		a := AuditLedger(m)
		if a.Problem != "" {
			t.Errorf("family %q: %s", fam, a.Problem)
		}
		for _, l := range a.Lines {
			if !l.Match {
				t.Errorf("family %q: %s", fam, l.Problem)
			}
		}
	}
}
