// Package report writes a model's report: one self-contained HTML page
// with the certificate, its ledger, the data and split it came from, the
// heaviest voters as rules, the cautions, and plots drawn with gonum's
// plot package and inlined as SVG; optionally a sweep's table and plot and
// a check on fresh rows.
//
// The page needs no network and no scripts: the plots are inline SVG, the
// style sheet is inline, and no element refers to another file. The same
// input gives the same bytes (no time stamps, no map order), so a report
// can be compared across runs.
//
// What the numbers mean and how they were computed belongs to package
// trainer; this package only lays them out. Reading files and flags belongs
// to cmd/surety.
package report
