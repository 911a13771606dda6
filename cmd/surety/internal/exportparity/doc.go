// Package exportparity holds the parity tests of the vote exports: each
// exported vote runs on a real engine and must give, on every row, the class
// and margin that the vote's own prediction (what `surety predict` prints)
// gives. It has no code of its own; its tests live here, away from the
// libraries, so that the engines' drivers (SQLite through the pure-Go
// modernc.org/sqlite) are built only for them.
package exportparity
