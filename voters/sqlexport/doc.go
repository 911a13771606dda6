// Package sqlexport writes a trained vote as one portable SQL SELECT that
// reads an input table's columns by name and returns, for every row, the
// class the vote predicts and its margin (and, on request, each class's
// total weight), exactly as [voters.Vote.Predict] gives them.
//
// It owns the translation and nothing else: the vote, its voters and their
// rules live in package voters; the model file, its certificate and its
// hash are the caller's (package trainer and the command line), and come in
// through [Provenance] as the text of the header comment.
//
// # What the SELECT uses
//
// Only SQL:2003 core: CASE, CAST, arithmetic, comparisons, IS NULL,
// nested queries in FROM, double-quoted identifiers and single-quoted
// strings. No vendor functions, no EXP: every voter votes for one class,
// and the full logistic voter's class is the largest of its linear scores,
// so no probability is ever needed.
//
// # How it matches Predict bit for bit
//
//   - Numbers: every non-zero literal is written with the shortest decimal
//     that reads back as the same float64 (strconv 'e' format, -1 digits) and
//     cast to DOUBLE PRECISION, so no engine keeps it as an exact DECIMAL.
//     Numeric input columns are cast to DOUBLE PRECISION once, as the CSV
//     reader parses every numeric cell into a float64.
//   - Missing values: SQL NULL is missing; in an engine that stores NaN, a
//     NaN cell is turned into NULL first, by a test that holds for every
//     number but NaN in both IEEE engines (NaN compares false) and engines
//     that order NaN above every number (PostgreSQL, DuckDB).
//   - Stumps: a threshold stump predicts its "below" class when the value is
//     at or below the threshold (<=), "above" otherwise; a NULL goes where
//     the stump's missing rule sends it. A category stump compares the text
//     with =; a level the model never saw is "other"; NULL follows the
//     missing rule.
//   - Linear voters: each class's score is the bias plus, input by input in
//     order, weight * (x - mean) / scale (a missing numeric input adds
//     nothing; a categorical input adds the weight of its level, nothing for
//     an unseen level or NULL), evaluated in Go's order of operations. A
//     score that is NaN in Go (an infinite input times a zero weight) is NULL
//     in the SQL; the class is the first of the largest scores that are not
//     NaN, class 0 when every score is NaN or -Inf, as Linear.Predict has it.
//   - The vote: each class's total adds the weights of the voters that chose
//     it in the order of [voters.Vote.SumOrder], the order Predict adds them
//     in, so totals agree to the last bit; the class is the first of the
//     largest totals (ties go to the lower class index) and the margin is its
//     total minus the largest other total, 0 on a tie.
//
// Long sums are split over nested queries (at most [MaxTermsPerLevel] terms
// per expression), since SQLite refuses expressions deeper than 1,000.
//
// The output's rows come in no particular order (a SELECT without ORDER
// BY); pass an identifying column through with [Options.Keep] to join them
// back.
package sqlexport
