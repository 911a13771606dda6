package main

import (
	"fmt"
	"io"
	"os"
	"sync"
	"time"

	"github.com/schollz/progressbar/v3"

	"surety/trainer"
)

// Progress is one live line on stderr, shown only when stderr is a
// terminal and --quiet is not given (env.progress), so that pipes, CI logs
// and every output file stay exactly as they are without it. The line says
// what the command is doing and, where the total is known (bytes of the
// file, the pool's fits, settings of a sweep), how far along it is; a
// ticker redraws it while work runs that cannot report (the statistics,
// boosting, an optimiser fit), so the elapsed time keeps moving.

// redrawEvery is how often the ticker redraws a line: a few times a second
// is enough to look alive and cheap on a shared terminal (common practice,
// no source).
const redrawEvery = 150 * time.Millisecond

// terminal serialises the progress line with everything else written to
// the same terminal: a write to stderr (a warning) or to stdout when it is
// the terminal too (predict's rows) first clears the line, which the next
// tick draws again below the text, so the two never share a line.
type terminal struct {
	mu   sync.Mutex
	raw  io.Writer // stderr itself, where the line is drawn
	line *meter    // the line on screen, or nil
}

// clearFirst is a writer of the terminal that clears the line first.
type clearFirst struct {
	t *terminal
	w io.Writer
}

func (c clearFirst) Write(p []byte) (int, error) {
	c.t.mu.Lock()
	defer c.t.mu.Unlock()
	if c.t.line != nil {
		c.t.line.bar.Clear()
	}
	return c.w.Write(p)
}

// attachTerminal turns progress on, stderr being a terminal; stdoutToo
// says stdout is a terminal as well.
func (e *env) attachTerminal(stdoutToo bool) {
	e.term = &terminal{raw: e.stderr}
	e.progress = true
	e.stderr = clearFirst{e.term, e.stderr}
	if stdoutToo {
		e.stdout = clearFirst{e.term, e.stdout}
	}
}

// meter is one progress line; its methods do nothing on a nil meter, which
// is what env.meter returns when progress is off. Every use of bar holds
// term.mu.
type meter struct {
	term *terminal
	bar  *progressbar.ProgressBar
	stop chan struct{}
	done sync.WaitGroup
	once sync.Once
}

// meter starts a line saying what; total is the known amount of work (-1
// when unknown: a spinner with the elapsed time), counted in bytes when
// bytes is set, of which done is done already. One line is shown at a
// time: finish the last before starting the next.
func (e *env) meter(what string, total, done int64, bytes bool) *meter {
	if !e.progress || e.term == nil {
		return nil
	}
	opts := []progressbar.Option{
		progressbar.OptionSetWriter(e.term.raw),
		progressbar.OptionSetDescription(what),
		progressbar.OptionSetWidth(24),
		progressbar.OptionClearOnFinish(),
		progressbar.OptionSetElapsedTime(true),
		progressbar.OptionSetPredictTime(total > 0),
		progressbar.OptionThrottle(redrawEvery / 3),
		// The library's own spinner goroutine is off: ours below redraws
		// every kind of line, under the terminal's lock, and is stopped
		// before the command goes on.
		progressbar.OptionSetSpinnerChangeInterval(0),
	}
	switch {
	case total > 0 && bytes:
		opts = append(opts, progressbar.OptionShowBytes(true))
	case total > 0:
		opts = append(opts, progressbar.OptionShowCount())
	default:
		total = -1
		opts = append(opts, progressbar.OptionSpinnerType(14))
	}
	m := &meter{term: e.term, bar: progressbar.NewOptions64(total, opts...), stop: make(chan struct{})}
	m.term.mu.Lock()
	m.term.line = m
	// The first drawing shows done: a Set after it could fall within the
	// throttle and leave the line at 0 until the next tick.
	if done > 0 {
		m.bar.Set64(done)
	} else {
		m.bar.RenderBlank()
	}
	m.term.mu.Unlock()
	m.done.Add(1)
	go func() {
		defer m.done.Done()
		tick := time.NewTicker(redrawEvery)
		defer tick.Stop()
		for {
			select {
			case <-m.stop:
				return
			case <-tick.C:
				m.term.mu.Lock()
				if total < 0 {
					m.bar.Add(1) // turns the spinner and redraws
				} else {
					m.bar.RenderBlank()
				}
				m.term.mu.Unlock()
			}
		}
	}()
	return m
}

// add counts n more units of work done.
func (m *meter) add(n int) {
	if m != nil {
		m.term.mu.Lock()
		m.bar.Add(n)
		m.term.mu.Unlock()
	}
}

// finish stops the redraws and clears the line; a second call does
// nothing.
func (m *meter) finish() {
	if m == nil {
		return
	}
	m.once.Do(func() {
		close(m.stop)
		m.done.Wait()
		m.term.mu.Lock()
		defer m.term.mu.Unlock()
		m.bar.Exit()
		// Exit keeps the line as it is; what follows on the terminal
		// starts on a clean line.
		m.bar.Clear()
		if m.term.line == m {
			m.term.line = nil
		}
	})
}

// spinner shows what on a line with the elapsed time until the returned
// func is called.
func (e *env) spinner(what string) func() {
	m := e.meter(what, -1, 0, false)
	return m.finish
}

// stageNames say what each of the trainer's stages (trainer.Config.Progress)
// is doing.
var stageNames = map[string]string{
	"split":      "splitting the rows",
	"pool":       "building the pool of voters",
	"statistics": "counting each voter's errors",
	"boost":      "boosting",
	"optimise":   "fitting the weights",
	"certify":    "certifying",
}

// stages shows the trainer's stages (trainer.Config.Progress) in turn,
// each on its own line, and counts the pool's fits
// (voters.PoolConfig.Progress) and a sweep's settings.
type stages struct {
	e        *env
	columns  int // feature columns the pool is built from
	settings int // settings a sweep fits; 0 for a single fit
	mu       sync.Mutex
	cur      *meter
	fit      int // the setting being fitted, from 1
	poolDone int // the pool's fits counted so far
	counting bool
}

// showStages wires a stages into cfg when progress is on and returns the
// func that clears the last line.
func (e *env) showStages(cfg *trainer.Config, columns, settings int) func() {
	if !e.progress {
		return func() {}
	}
	s := &stages{e: e, columns: columns, settings: settings}
	cfg.Progress, cfg.Pool.Progress = s.stage, s.poolStep
	return func() {
		s.mu.Lock()
		defer s.mu.Unlock()
		s.cur.finish()
	}
}

func (s *stages) stage(stage string) {
	s.mu.Lock()
	defer s.mu.Unlock()
	s.cur.finish()
	what := stageNames[stage]
	if what == "" {
		what = stage
	}
	if stage == "pool" {
		what = s.poolLine()
	}
	if s.settings > 0 && (stage == "optimise" || stage == "certify") {
		if stage == "optimise" {
			s.fit++
		}
		s.cur = s.e.meter(fmt.Sprintf("setting %d of %d: %s", s.fit, s.settings, what), int64(s.settings), int64(s.fit-1), false)
		return
	}
	s.cur, s.counting = s.e.meter(what, -1, 0, false), false
}

// poolLine says what the pool's line is doing.
func (s *stages) poolLine() string {
	return stageNames["pool"] + " from " + counted(s.columns, "column", "columns")
}

// poolStep counts a fit of the pool, called from the pool's goroutines:
// the first turns the pool's spinner into a bar of total fits.
func (s *stages) poolStep(done, total int) {
	s.mu.Lock()
	defer s.mu.Unlock()
	if !s.counting {
		s.cur.finish()
		s.cur, s.counting, s.poolDone = s.e.meter(s.poolLine(), int64(total), int64(done), false), true, done
		return
	}
	if done > s.poolDone { // the goroutines may report out of order
		s.cur.add(done - s.poolDone)
		s.poolDone = done
	}
}

// countingFile is a data file whose reads move a meter, with the Stat that
// lets datasets.Read size the table from the file's length.
// It has no other methods of the file, so that nothing reads around the
// count (an io.WriterTo would).
type countingFile struct {
	f *os.File
	m *meter
}

func (c countingFile) Read(p []byte) (int, error) {
	n, err := c.f.Read(p)
	c.m.add(n)
	return n, err
}

func (c countingFile) Stat() (os.FileInfo, error) { return c.f.Stat() }
func (c countingFile) Close() error               { return c.f.Close() }

// openCounted opens path for reading with a meter of its bytes; nil when
// progress is off or the file will not open (the reader then reports the
// error in its own words).
func (e *env) openCounted(path string) (io.ReadCloser, *meter) {
	if !e.progress {
		return nil, nil
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, nil
	}
	fi, err := f.Stat()
	if err != nil || !fi.Mode().IsRegular() || fi.Size() == 0 {
		f.Close()
		return nil, nil
	}
	m := e.meter("reading "+path, fi.Size(), 0, true)
	return countingFile{f, m}, m
}
