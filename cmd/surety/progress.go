package main

import (
	"github.com/schollz/progressbar/v3"
)

// spinner shows an indeterminate progress line on stderr while a stage
// runs, and only when stderr is a terminal; the returned func clears it.
func (e *env) spinner(what string) func() {
	if !e.progress {
		return func() {}
	}
	bar := progressbar.NewOptions(-1,
		progressbar.OptionSetWriter(e.stderr),
		progressbar.OptionSetDescription(what),
		progressbar.OptionSpinnerType(14),
		progressbar.OptionClearOnFinish(),
		progressbar.OptionThrottle(100_000_000),
	)
	return func() { bar.Finish() }
}

// stages returns a trainer progress callback that shows each stage in turn.
func (e *env) stages() (func(stage string), func()) {
	stop := func() {}
	return func(stage string) {
			stop()
			stop = e.spinner(stage)
		}, func() {
			stop()
		}
}
