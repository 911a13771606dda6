package trainer

import (
	"bytes"
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"
	"time"

	"surety/objective"
	"surety/voters"
)

func itoa(n int) string { return strconv.Itoa(n) }

// The schedule's shares add up to delta: sum_k 6/(pi^2 k^2) = 1 (Euler's
// Basel sum, sum_k 1/k^2 = pi^2/6). The tail beyond N is below 1/N (the
// integral test), so the partial sum to N lies in [1 - 1/N, 1].
func TestSpentDeltaSumsToDelta(t *testing.T) {
	cases := []struct {
		name  string
		delta float64
		n     int
	}{
		{"delta 0.05, 10^3 checks", 0.05, 1000},
		{"delta 0.1, 10^5 checks", 0.1, 100000},
		{"delta 0.01, one check", 0.01, 1},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			var sum float64
			for k := c.n; k >= 1; k-- { // smallest first, for the rounding
				sum += SpentDelta(c.delta, k)
			}
			if sum > c.delta*(1+1e-12) || sum < c.delta*(1-1/float64(c.n))*(1-1e-12) {
				t.Errorf("sum of %d shares %v, want in [%v, %v]", c.n, sum, c.delta*(1-1/float64(c.n)), c.delta)
			}
		})
	}
	// Check 1 spends 6/pi^2 = 0.6079... of delta (from memory; 6/pi^2 is
	// also the density of square-free integers).
	if got := SpentDelta(1, 1); math.Abs(got-0.6079271018540267) > 1e-15 {
		t.Errorf("SpentDelta(1, 1) = %v", got)
	}
}

// The promise of the monitoring ledger, by simulation: a vote with a known
// error rate p is checked 50 times on fresh rows (each row an error with
// probability p, independently: exactly what a fixed vote does on i.i.d.
// rows), against a certificate equal to p, so that the certificate holds
// and any drift verdict is wrong. A sequence is wrong when some check's
// lower limit is above p (a wrong drift verdict) or its upper limit below
// p. The share of wrong sequences must stay at most delta plus 3 binomial
// standard deviations of the estimated share, sqrt(delta (1-delta) / S)
// (common practice, no source). The same sequences checked the naive way,
// each at the full delta, must go wrong far more often: that is the
// problem the schedule solves.
func TestMonitorCoverage(t *testing.T) {
	const (
		delta  = 0.1
		checks = 50
	)
	sequences := 2000
	if testing.Short() {
		sequences = 400
	}
	margin := 3 * math.Sqrt(delta*(1-delta)/float64(sequences))
	type sim struct {
		name string
		p    float64
		rows int
	}
	cases := []sim{
		{"rare errors, p 0.02, 100 rows a check", 0.02, 100},
		{"p 0.1, 200 rows a check", 0.1, 200},
		{"p 0.3, 50 rows a check", 0.3, 50},
	}
	if !testing.Short() {
		// A real vote: trained on demo rows, its error rate over 100,000
		// fresh rows is the rate of a population each check draws from
		// with replacement, so that rate is known exactly.
		m, err := Train(context.Background(), demoTable(t, 1000, 21), Config{Seed: 1, Pool: voters.PoolConfig{Thresholds: 8, LinearVoters: intp(2)}})
		if err != nil {
			t.Fatal(err)
		}
		pool := demoTable(t, 100000, 22)
		errs, err := m.CountErrors(pool)
		if err != nil {
			t.Fatal(err)
		}
		cases = append(cases, sim{"the demo vote, 300 rows a check", float64(errs) / float64(pool.Rows), 300})
	}
	for i, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(uint64(i)+1, 12))
			// Limits depend only on (check, errors): computed once each.
			type key struct{ k, errors int }
			memo := map[key][2]float64{}
			limits := func(k, e int) (lo, up float64) {
				if v, ok := memo[key{k, e}]; ok {
					return v[0], v[1]
				}
				l, u, err := MonitorLimits(e, c.rows, k, delta)
				if err != nil {
					t.Fatal(err)
				}
				memo[key{k, e}] = [2]float64{l.Value, u.Value}
				return l.Value, u.Value
			}
			naiveMemo := map[int][2]float64{}
			naive := func(e int) (lo, up float64) {
				if v, ok := naiveMemo[e]; ok {
					return v[0], v[1]
				}
				// One check on its own at delta: half on each limit.
				l, err := objective.TestSetLowerBound(e, c.rows, delta/2)
				if err != nil {
					t.Fatal(err)
				}
				u, err := objective.TestSetBound(e, c.rows, delta/2)
				if err != nil {
					t.Fatal(err)
				}
				naiveMemo[e] = [2]float64{l.Value, u.Value}
				return l.Value, u.Value
			}
			wrong, naiveWrong, drift := 0, 0, 0
			for range sequences {
				bad, naiveBad, anyDrift := false, false, false
				for k := 1; k <= checks; k++ {
					e := 0
					for range c.rows {
						if rng.Float64() < c.p {
							e++
						}
					}
					lo, up := limits(k, e)
					if lo > c.p { // with the certificate at p, a drift verdict
						anyDrift = true
					}
					bad = bad || lo > c.p || up < c.p
					nl, nu := naive(e)
					naiveBad = naiveBad || nl > c.p || nu < c.p
				}
				if bad {
					wrong++
				}
				if naiveBad {
					naiveWrong++
				}
				if anyDrift {
					drift++
				}
			}
			share := float64(wrong) / float64(sequences)
			naiveShare := float64(naiveWrong) / float64(sequences)
			t.Logf("p %.4f, %d rows a check, %d sequences of %d checks at delta %g: %d sequences with a wrong limit (%.4f; %d with a wrong drift verdict), bound %.4f; each check at delta alone: %d (%.4f)",
				c.p, c.rows, sequences, checks, delta, wrong, share, drift, delta+margin, naiveWrong, naiveShare)
			if share > delta+margin {
				t.Errorf("%d of %d sequences hold a wrong limit (%.4f), above delta %g + %.4f", wrong, sequences, share, delta, margin)
			}
			if naiveShare < 0.5 {
				t.Errorf("checks at delta alone went wrong in only %.4f of the sequences: the simulation does not show the problem", naiveShare)
			}
		})
	}
}

// A ledger through the whole path: Monitor on real fresh tables, written,
// read back (which recomputes every entry), and the refusals.
func TestMonitorLedger(t *testing.T) {
	m, err := Train(context.Background(), demoTable(t, 800, 2), Config{Seed: 1, Pool: voters.PoolConfig{Thresholds: 8, LinearVoters: intp(2)}})
	if err != nil {
		t.Fatal(err)
	}
	l, err := NewMonitorLedger(m, 0.05)
	if err != nil {
		t.Fatal(err)
	}
	day := time.Date(2026, 12, 1, 9, 0, 0, 0, time.UTC)
	for k := 1; k <= 4; k++ {
		res, e, err := Monitor(m, demoTable(t, 300, uint64(100+k)), l, MonitorConfig{Time: day.AddDate(0, 0, 7*k)})
		if err != nil {
			t.Fatal(err)
		}
		lo, up, _ := MonitorLimits(e.Errors, e.Rows, k, 0.05)
		if e.Check != k || e.Lower != lo.Value || e.Upper != up.Value || res.Lower.Value != e.Lower || res.Delta != SpentDelta(0.05, k)/2 {
			t.Errorf("check %d: entry %+v, limits [%v, %v], check delta %v", k, e, lo.Value, up.Value, res.Delta)
		}
	}
	var b bytes.Buffer
	if err := l.Encode(&b); err != nil {
		t.Fatal(err)
	}
	back, err := DecodeMonitorLedger(bytes.NewReader(b.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	var again bytes.Buffer
	back.Encode(&again)
	if !bytes.Equal(b.Bytes(), again.Bytes()) || len(back.Entries) != 4 {
		t.Errorf("round trip changed the ledger:\n%s\n%s", b.String(), again.String())
	}

	other, err := Train(context.Background(), demoTable(t, 800, 3), Config{Seed: 1, Pool: voters.PoolConfig{Thresholds: 8, LinearVoters: intp(2)}})
	if err != nil {
		t.Fatal(err)
	}
	later := MonitorConfig{Time: day.AddDate(0, 1, 0)}
	cases := []struct {
		name string
		run  func() error
		want string
		is   error
	}{
		{"another model", func() error { return l.Matches(other, 0.05) }, "another model", nil},
		{"another delta", func() error { return l.Matches(m, 0.1) }, "delta 0.05, not 0.1", nil},
		{"same rows again", func() error {
			_, _, err := Monitor(m, demoTable(t, 300, 102), l, later)
			return err
		}, "check 2's rows", ErrRepeatedData},
		{"the training file", func() error {
			_, _, err := Monitor(m, demoTable(t, 800, 2), l, later)
			return err
		}, "trained on", ErrNotFresh},
		{"time before the last check", func() error {
			_, _, err := Monitor(m, demoTable(t, 300, 200), l, MonitorConfig{Time: day})
			return err
		}, "before the ledger's last check", nil},
		{"no time", func() error {
			_, _, err := Monitor(m, demoTable(t, 300, 200), l, MonitorConfig{})
			return err
		}, "no time", nil},
		{"delta out of range", func() error { _, err := NewMonitorLedger(m, 1); return err }, "delta", nil},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			err := c.run()
			if err == nil || !strings.Contains(err.Error(), c.want) || (c.is != nil && !errors.Is(err, c.is)) {
				t.Errorf("error %v, want one with %q", err, c.want)
			}
			if len(l.Entries) != 4 {
				t.Errorf("a refused check changed the ledger: %d entries", len(l.Entries))
			}
		})
	}
	// With AllowRepeat the same rows are recorded, marked.
	_, e, err := Monitor(m, demoTable(t, 300, 102), l, MonitorConfig{Time: later.Time, AllowRepeat: true})
	if err != nil || e.RepeatOf != 2 || e.Check != 5 {
		t.Errorf("allowed repeat: entry %+v, error %v", e, err)
	}
}

// Every edit of a ledger line that changes what it says is refused on
// read, naming the line.
func TestDecodeMonitorLedgerRejects(t *testing.T) {
	m, err := Train(context.Background(), demoTable(t, 400, 2), Config{Seed: 1, Pool: voters.PoolConfig{Thresholds: 4, LinearVoters: intp(0)}})
	if err != nil {
		t.Fatal(err)
	}
	l, _ := NewMonitorLedger(m, 0.05)
	day := time.Date(2026, 12, 1, 0, 0, 0, 0, time.UTC)
	for k := 1; k <= 2; k++ {
		if _, _, err := Monitor(m, demoTable(t, 200, uint64(10+k)), l, MonitorConfig{Time: day.AddDate(0, 0, k)}); err != nil {
			t.Fatal(err)
		}
	}
	var b bytes.Buffer
	l.Encode(&b)
	good := b.String()
	lines := strings.Split(strings.TrimSuffix(good, "\n"), "\n")
	e2 := l.Entries[1]
	edit := func(line int, old, new string) string {
		out := append([]string(nil), lines...)
		if !strings.Contains(out[line], old) {
			t.Fatalf("line %d lacks %q: %s", line+1, old, out[line])
		}
		out[line] = strings.Replace(out[line], old, new, 1)
		return strings.Join(out, "\n") + "\n"
	}
	cases := []struct {
		name, text, want string
	}{
		{"empty", "", "empty file"},
		{"not JSON", "rows,errors\n", "line 1"},
		{"another format", edit(0, `"surety_monitor_format":1`, `"surety_monitor_format":9`), "format 9"},
		{"another method", edit(0, `"method":"`, `"method":"x`), "method"},
		{"delta out of range", edit(0, `"delta":0.05,`, `"delta":2,`), "delta 2"},
		{"fewer errors", edit(2, `"errors":`+itoa(e2.Errors), `"errors":`+itoa(e2.Errors-1)), "line 3: check 2: error rate"},
		{"lower limit edited", edit(2, `"lower":0.`, `"lower":0.0`), "line 3: check 2: limits"},
		{"delta share edited", edit(2, `"delta":0.00`, `"delta":0.01`), "line 3: check 2: delta"},
		{"verdict flipped", edit(2, `"consistent":true`, `"consistent":false`), "line 3: check 2: consistent"},
		{"renumbered", edit(2, `"check":2`, `"check":3`), "line 3: check 3, want 2"},
		{"time reversed", edit(2, `"time":"2026-12-03`, `"time":"2026-11-03`), "line 3: check 2: time"},
		{"repeat claimed", edit(2, `"consistent":true`, `"consistent":true,"repeat_of":1`), "repeat_of 1"},
		{"unknown field", edit(1, `"rows":`, `"extra":1,"rows":`), "line 2"},
		{"blank line", good + "\n", "empty line"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if _, err := DecodeMonitorLedger(strings.NewReader(c.text)); err == nil || !strings.Contains(err.Error(), c.want) {
				t.Errorf("error %v, want one with %q", err, c.want)
			}
		})
	}
	if _, err := DecodeMonitorLedger(strings.NewReader(good)); err != nil {
		t.Errorf("the untouched ledger: %v", err)
	}
}

// The k-th check's limits are the one-sided Clopper-Pearson limits at
// delta_k / 2. Reference values: scipy.stats.beta.ppf(delta_k/2, e, n-e+1)
// and beta.ppf(1-delta_k/2, e+1, n-e), scipy 1.10.1 (Debian bookworm),
// delta_k = delta*6/(pi^2 k^2) computed in Python floats.
func TestMonitorLimitsMatchScipy(t *testing.T) {
	cases := []struct {
		name                string
		errors, rows, k     int
		delta, lower, upper float64
	}{
		{"check 3, half wrong", 199, 400, 3, 0.05, 0.4234671653055038, 0.5716098256988291},
		{"check 1", 22, 400, 1, 0.05, 0.03307813279132249, 0.08508294094965375},
		{"no errors", 0, 300, 2, 0.05, 0, 0.018404772010866464},
		{"check 50", 5, 100, 50, 0.1, 0.0028939411343451415, 0.2044832265015063},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			lo, up, err := MonitorLimits(c.errors, c.rows, c.k, c.delta)
			if err != nil {
				t.Fatal(err)
			}
			// scipy's ppf is good to about 1e-12 here; our bisection
			// stops at 1e-15 on the safe side.
			if math.Abs(lo.Value-c.lower) > 1e-9 || math.Abs(up.Value-c.upper) > 1e-9 || lo.Value > c.lower+1e-12 || up.Value < c.upper-1e-12 {
				t.Errorf("limits [%v, %v], scipy [%v, %v]", lo.Value, up.Value, c.lower, c.upper)
			}
			if want := c.delta * 6 / (math.Pi * math.Pi * float64(c.k*c.k)) / 2; math.Abs(lo.Delta-want) > 1e-18 || up.Delta != lo.Delta {
				t.Errorf("delta %v and %v, want %v", lo.Delta, up.Delta, want)
			}
		})
	}
}

// A ledger built by hand, its entries computed by MonitorLimits: the fuzz
// seed below.
func handLedger(t testing.TB) []byte {
	t.Helper()
	l := MonitorLedger{Header: MonitorHeader{Format: MonitorFormat, Method: MonitorMethod, Delta: 0.05,
		Model: MonitorModel{SHA256: strings.Repeat("ab", 32), Label: "y", RiskBound: 0.2, Delta: 0.05}}}
	for k, e := range []int{3, 40, 3} {
		lo, up, err := MonitorLimits(e, 100, k+1, 0.05)
		if err != nil {
			t.Fatal(err)
		}
		l.Entries = append(l.Entries, MonitorEntry{Check: k + 1, Time: "2026-12-0" + itoa(k+1) + "T00:00:00Z", Source: "w.csv",
			Rows: 100, Errors: e, ErrorRate: float64(e) / 100, Delta: SpentDelta(0.05, k+1), Lower: lo.Value, Upper: up.Value,
			Consistent: lo.Value <= 0.2})
		l.Entries[k].Data.SHA256 = strings.Repeat(itoa(k), 64)
	}
	var b bytes.Buffer
	if err := l.Encode(&b); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// The ledger is outside input: any bytes give a ledger or an error, never
// a panic, and a ledger read is written back to bytes that read the same.
// Run with go test ./trainer -run XXX -fuzz FuzzDecodeMonitorLedger.
func FuzzDecodeMonitorLedger(f *testing.F) {
	good := handLedger(f)
	if l, err := DecodeMonitorLedger(bytes.NewReader(good)); err != nil || len(l.Entries) != 3 {
		f.Fatalf("the seed ledger does not read: %v", err)
	}
	f.Add(good)
	f.Add(good[:len(good)/2])
	f.Add([]byte("{}\n"))
	f.Add([]byte(""))
	f.Fuzz(func(t *testing.T, b []byte) {
		l, err := DecodeMonitorLedger(bytes.NewReader(b))
		if err != nil {
			return
		}
		var out bytes.Buffer
		if err := l.Encode(&out); err != nil {
			t.Fatal(err)
		}
		again, err := DecodeMonitorLedger(bytes.NewReader(out.Bytes()))
		if err != nil {
			t.Fatalf("a ledger read is not read again: %v\n%s", err, out.Bytes())
		}
		if len(again.Entries) != len(l.Entries) {
			t.Fatalf("%d entries, then %d", len(l.Entries), len(again.Entries))
		}
	})
}
