package trainer

import (
	"bufio"
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"time"

	"surety/datasets"
	"surety/objective"
	"surety/trainer/atomicfile"
)

// Repeated checks of one deployed vote.
//
// One check at delta is wrong with probability up to delta; k checks at the
// same delta can be wrong up to k times as often, so after a year of weekly
// checks some verdict is likely wrong. A monitoring ledger keeps the
// guarantee over the whole sequence by delta spending (FIELD-GUIDE.md,
// "Checking a deployed vote again and again"): the k-th check spends
//
//	delta_k = delta * 6 / (pi^2 k^2),
//
// and since sum_k 1/k^2 = pi^2/6 (Euler's Basel sum) the shares add up to
// delta however many checks are run. Each check splits its delta_k evenly
// between a lower and an upper one-sided binomial limit on the error rate
// of its own rows' source (the test-set bound of Langford 2005, JMLR, the
// one-sided Clopper-Pearson limits). By the union bound, which needs no
// independence between checks, every limit of every check in the ledger
// holds at once with probability at least 1 - delta. A drift verdict
// (lower limit above the model's certificate) can only be wrong when a
// lower limit fails, and a consistent verdict's upper limit only when an
// upper limit fails, so the probability that any verdict in the sequence
// is wrong is at most delta.
//
// Each check bounds the error rate of the source its own rows came from,
// so the guarantee holds when the source changes between checks, which is
// what a drift alarm needs; a confidence sequence over the pooled rows
// (Howard, Ramdas, McAuliffe, Sekhon 2021, Annals of Statistics) would be
// tighter for a source that never changes, but it bounds one rate shared
// by all checks.

// MonitorFormat is the version of the monitoring ledger layout.
const MonitorFormat = 1

// MonitorMethod names the way a ledger spends delta.
const MonitorMethod = "delta-spending-6/(pi^2 k^2)"

// MonitorStatement says in words what a ledger at delta guarantees.
func MonitorStatement(delta float64) string {
	return fmt.Sprintf("With probability at least %s, every lower and upper limit of every check in this ledger holds at once, however many checks are run: check k spends delta_k = %g * 6 / (pi^2 k^2), half on each limit (the shares sum to %g).",
		Percent(1-delta, false), delta, delta)
}

// ErrRepeatedData is the error Monitor wraps when the rows of a check are
// the same file (same SHA-256) as an earlier check's: they add no
// evidence, and counting them again would overstate it.
var ErrRepeatedData = errors.New("the same rows were checked before")

// SpentDelta is the share of delta the k-th check of a ledger spends,
// delta * 6 / (pi^2 k^2), for k >= 1.
func SpentDelta(delta float64, k int) float64 {
	return delta * 6 / (math.Pi * math.Pi * float64(k) * float64(k))
}

// MonitorLimits are the lower and upper limits of the k-th check of a
// ledger at delta, errors of rows: the binomial test-set limits, each at
// SpentDelta(delta, k) / 2.
func MonitorLimits(errors, rows, k int, delta float64) (lower, upper objective.Bound, err error) {
	if k < 1 {
		return lower, upper, fmt.Errorf("trainer: monitor: check number %d, want at least 1", k)
	}
	half := SpentDelta(delta, k) / 2
	if lower, err = objective.TestSetLowerBound(errors, rows, half); err != nil {
		return lower, upper, fmt.Errorf("trainer: monitor: check %d: %w", k, err)
	}
	if upper, err = objective.TestSetBound(errors, rows, half); err != nil {
		return lower, upper, fmt.Errorf("trainer: monitor: check %d: %w", k, err)
	}
	return lower, upper, nil
}

// MonitorModel identifies the model a ledger belongs to.
type MonitorModel struct {
	// SHA256 is the hex SHA-256 of the model's file layout as EncodeModel
	// writes it (ModelDigest).
	SHA256 string `json:"sha256"`
	Label  string `json:"label"`
	// RiskBound and Delta are the model's certificate, the line every
	// verdict compares against.
	RiskBound float64 `json:"risk_bound"`
	Delta     float64 `json:"delta"`
	// TrainingData is the training file's fingerprint; a check on it is
	// refused.
	TrainingData datasets.Fingerprint `json:"training_data"`
}

// MonitorHeader is the first line of a ledger file.
type MonitorHeader struct {
	Format int          `json:"surety_monitor_format"`
	Method string       `json:"method"`
	Delta  float64      `json:"delta"`
	Model  MonitorModel `json:"model"`
}

// MonitorEntry is one check of a ledger.
type MonitorEntry struct {
	// Check is the entry's number k, from 1.
	Check int `json:"check"`
	// Time is when the check ran, RFC 3339 in UTC, as the caller said.
	Time   string               `json:"time"`
	Source string               `json:"source"`
	Data   datasets.Fingerprint `json:"data"`
	Rows   int                  `json:"rows"`
	Errors int                  `json:"errors"`
	// ErrorRate is Errors / Rows, ties counted as errors.
	ErrorRate float64 `json:"error_rate"`
	// Delta is SpentDelta(ledger delta, Check); Lower and Upper are the
	// limits at Delta / 2 each.
	Delta float64 `json:"delta"`
	Lower float64 `json:"lower"`
	Upper float64 `json:"upper"`
	// Consistent is false when Lower exceeds the model's certificate: a
	// drift verdict.
	Consistent bool `json:"consistent"`
	// RepeatOf, when not zero, is the earlier check whose rows these are
	// (MonitorConfig.AllowRepeat).
	RepeatOf int `json:"repeat_of,omitempty"`
}

// MonitorLedger is the record of repeated checks of one model at one delta.
type MonitorLedger struct {
	Header  MonitorHeader
	Entries []MonitorEntry
}

// ModelDigest is the hex SHA-256 of m's file layout as EncodeModel writes
// it: a ledger names its model by it.
func ModelDigest(m *Model) (string, error) {
	var b bytes.Buffer
	if err := EncodeModel(&b, m); err != nil {
		return "", err
	}
	sum := sha256.Sum256(b.Bytes())
	return hex.EncodeToString(sum[:]), nil
}

// NewMonitorLedger starts an empty ledger for m at delta.
func NewMonitorLedger(m *Model, delta float64) (*MonitorLedger, error) {
	if !(delta > 0 && delta < 1) {
		return nil, fmt.Errorf("trainer: monitor: delta must be in (0, 1), got %g", delta)
	}
	id, err := monitorModel(m)
	if err != nil {
		return nil, err
	}
	return &MonitorLedger{Header: MonitorHeader{Format: MonitorFormat, Method: MonitorMethod, Delta: delta, Model: id}}, nil
}

func monitorModel(m *Model) (MonitorModel, error) {
	sum, err := ModelDigest(m)
	if err != nil {
		return MonitorModel{}, fmt.Errorf("trainer: monitor: %w", err)
	}
	return MonitorModel{SHA256: sum, Label: m.Label, RiskBound: m.Certificate.RiskBound, Delta: m.Certificate.Delta,
		TrainingData: m.Provenance.Data}, nil
}

// Matches refuses a ledger that belongs to another model than m or was
// kept at another delta: its checks have spent a schedule of their own.
func (l *MonitorLedger) Matches(m *Model, delta float64) error {
	id, err := monitorModel(m)
	if err != nil {
		return err
	}
	if id.SHA256 != l.Header.Model.SHA256 {
		return fmt.Errorf("trainer: monitor: the ledger belongs to another model (SHA-256 %s, this model's is %s): start a new ledger for this model", l.Header.Model.SHA256, id.SHA256)
	}
	if delta != l.Header.Delta {
		return fmt.Errorf("trainer: monitor: the ledger is kept at delta %g, not %g: its checks spend a schedule over delta %g", l.Header.Delta, delta, l.Header.Delta)
	}
	return nil
}

// MonitorConfig holds the settings of Monitor.
type MonitorConfig struct {
	// Time is when the check runs; required (the library reads no clock).
	// It must not be before the ledger's last check.
	Time time.Time
	// AllowRepeat lets a check use rows (the same SHA-256) an earlier check
	// of the ledger used; the entry records which. By default they are
	// refused with ErrRepeatedData.
	AllowRepeat bool
}

// Monitor runs the next check of ledger l on the labelled fresh rows t and
// appends it to l. The check is Check at SpentDelta(delta, k) / 2, so its
// Lower and Upper are the ledger's limits and its per-class bounds are at
// SpentDelta / (2 K) each (all per-class bounds of the ledger then hold at
// once with probability at least 1 - delta/2, a statement of its own). The
// training file is always refused, and so are rows an earlier check used
// unless cfg.AllowRepeat. l is left unchanged on error.
func Monitor(m *Model, t *datasets.Table, l *MonitorLedger, cfg MonitorConfig) (*CheckResult, *MonitorEntry, error) {
	if err := l.Matches(m, l.Header.Delta); err != nil {
		return nil, nil, err
	}
	if cfg.Time.IsZero() {
		return nil, nil, fmt.Errorf("trainer: monitor: no time given for the check")
	}
	when := cfg.Time.UTC().Format(time.RFC3339)
	k := len(l.Entries) + 1
	e := MonitorEntry{Check: k, Time: when, Source: t.Source, Data: t.Fingerprint, Rows: t.Rows}
	if n := len(l.Entries); n > 0 {
		last, err := time.Parse(time.RFC3339, l.Entries[n-1].Time)
		if err == nil && cfg.Time.Before(last) {
			return nil, nil, fmt.Errorf("trainer: monitor: time %s is before the ledger's last check (%d, %s)", when, n, l.Entries[n-1].Time)
		}
	}
	for _, p := range l.Entries {
		if p.Data.SHA256 != "" && p.Data.SHA256 == t.Fingerprint.SHA256 {
			if !cfg.AllowRepeat {
				return nil, nil, fmt.Errorf("trainer: monitor: %s has the SHA-256 of check %d's rows (%s, %s): %w", t.Source, p.Check, p.Source, p.Time, ErrRepeatedData)
			}
			e.RepeatOf = p.Check
			break
		}
	}
	e.Delta = SpentDelta(l.Header.Delta, k)
	res, err := Check(m, t, CheckConfig{Delta: e.Delta / 2})
	if err != nil {
		return nil, nil, err
	}
	e.Errors, e.ErrorRate = res.Errors, res.ErrorRate
	e.Lower, e.Upper, e.Consistent = res.Lower.Value, res.Upper.Value, res.Consistent
	l.Entries = append(l.Entries, e)
	return res, &l.Entries[len(l.Entries)-1], nil
}

// Encode writes l as JSON lines: the header, then one line per check.
func (l *MonitorLedger) Encode(w io.Writer) error {
	bw := bufio.NewWriter(w)
	enc := json.NewEncoder(bw)
	if err := enc.Encode(l.Header); err != nil {
		return fmt.Errorf("trainer: monitor: %w", err)
	}
	for _, e := range l.Entries {
		if err := enc.Encode(e); err != nil {
			return fmt.Errorf("trainer: monitor: %w", err)
		}
	}
	return bw.Flush()
}

// WriteMonitorLedger writes l to path atomically (package atomicfile): the
// whole ledger goes to a temporary file renamed over the old one, so an
// interrupted run leaves the earlier ledger intact.
func WriteMonitorLedger(path string, l *MonitorLedger) error {
	if err := atomicfile.WriteWith(path, func(f *os.File) error { return l.Encode(f) }); err != nil {
		return fmt.Errorf("trainer: %w", err)
	}
	return nil
}

// ReadMonitorLedgerFile reads and validates the ledger at path
// (DecodeMonitorLedger).
func ReadMonitorLedgerFile(path string) (*MonitorLedger, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("trainer: %w", err)
	}
	l, err := DecodeMonitorLedger(bytes.NewReader(b))
	if err != nil {
		return nil, fmt.Errorf("trainer: %s: %w", path, err)
	}
	return l, nil
}

// monitorTolerance is how far a stored limit may sit from its recomputed
// value (the JSON decimal form round-trips float64 exactly; this leaves
// room for another platform's last bits).
const monitorTolerance = 1e-9

// DecodeMonitorLedger reads a ledger and checks that it is one: the format,
// the method, and every entry recomputed from its rows and errors (its
// number, delta share, limits and verdict, the time order and repeats),
// so an edited ledger is refused with the line and what disagrees.
func DecodeMonitorLedger(r io.Reader) (*MonitorLedger, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 64<<10), 16<<20)
	var l MonitorLedger
	line := 0
	for sc.Scan() {
		line++
		text := bytes.TrimSpace(sc.Bytes())
		if len(text) == 0 {
			return nil, fmt.Errorf("line %d: empty line", line)
		}
		dec := json.NewDecoder(bytes.NewReader(text))
		dec.DisallowUnknownFields()
		if line == 1 {
			if err := dec.Decode(&l.Header); err != nil {
				return nil, fmt.Errorf("line 1: not a monitoring ledger header: %w", err)
			}
			if err := checkHeader(l.Header); err != nil {
				return nil, fmt.Errorf("line 1: %w", err)
			}
			continue
		}
		var e MonitorEntry
		if err := dec.Decode(&e); err != nil {
			return nil, fmt.Errorf("line %d: not a ledger entry: %w", line, err)
		}
		if err := checkEntry(&l, e); err != nil {
			return nil, fmt.Errorf("line %d: %w", line, err)
		}
		l.Entries = append(l.Entries, e)
	}
	if err := sc.Err(); err != nil {
		return nil, err
	}
	if line == 0 {
		return nil, fmt.Errorf("empty file: not a monitoring ledger")
	}
	return &l, nil
}

func checkHeader(h MonitorHeader) error {
	if h.Format != MonitorFormat {
		return fmt.Errorf("monitoring ledger format %d is not supported (this is version %s, which reads format %d)", h.Format, Version, MonitorFormat)
	}
	if h.Method != MonitorMethod {
		return fmt.Errorf("method %q is not %q", h.Method, MonitorMethod)
	}
	if !(h.Delta > 0 && h.Delta < 1) {
		return fmt.Errorf("delta %v is not in (0, 1)", h.Delta)
	}
	if len(h.Model.SHA256) != 64 {
		return fmt.Errorf("the model's SHA-256 %q is not 64 hex digits", h.Model.SHA256)
	}
	return nil
}

func checkEntry(l *MonitorLedger, e MonitorEntry) error {
	k := len(l.Entries) + 1
	if e.Check != k {
		return fmt.Errorf("check %d, want %d (checks are numbered from 1 in order)", e.Check, k)
	}
	when, err := time.Parse(time.RFC3339, e.Time)
	if err != nil {
		return fmt.Errorf("check %d: time %q is not RFC 3339", k, e.Time)
	}
	if k > 1 {
		prev, _ := time.Parse(time.RFC3339, l.Entries[k-2].Time)
		if when.Before(prev) {
			return fmt.Errorf("check %d: time %s is before check %d's %s", k, e.Time, k-1, l.Entries[k-2].Time)
		}
	}
	if e.Rows < 1 || e.Errors < 0 || e.Errors > e.Rows {
		return fmt.Errorf("check %d: %d errors on %d rows", k, e.Errors, e.Rows)
	}
	if rate := float64(e.Errors) / float64(e.Rows); e.ErrorRate != rate {
		return fmt.Errorf("check %d: error rate %v, but %d / %d = %v", k, e.ErrorRate, e.Errors, e.Rows, rate)
	}
	if want := SpentDelta(l.Header.Delta, k); math.Abs(e.Delta-want) > monitorTolerance*want {
		return fmt.Errorf("check %d: delta %v, but the schedule gives %v", k, e.Delta, want)
	}
	lo, up, err := MonitorLimits(e.Errors, e.Rows, k, l.Header.Delta)
	if err != nil {
		return err
	}
	if math.Abs(e.Lower-lo.Value) > monitorTolerance || math.Abs(e.Upper-up.Value) > monitorTolerance {
		return fmt.Errorf("check %d: limits [%v, %v], but %d errors of %d rows give [%v, %v]", k, e.Lower, e.Upper, e.Errors, e.Rows, lo.Value, up.Value)
	}
	if want := lo.Value <= l.Header.Model.RiskBound; e.Consistent != want {
		return fmt.Errorf("check %d: consistent %v, but its lower limit %v against the certificate %v says %v", k, e.Consistent, lo.Value, l.Header.Model.RiskBound, want)
	}
	repeat := 0
	for _, p := range l.Entries {
		if p.Data.SHA256 != "" && p.Data.SHA256 == e.Data.SHA256 {
			repeat = p.Check
			break
		}
	}
	if e.RepeatOf != repeat {
		return fmt.Errorf("check %d: repeat_of %d, but its rows' SHA-256 first appears at check %d (0: never)", k, e.RepeatOf, repeat)
	}
	return nil
}
