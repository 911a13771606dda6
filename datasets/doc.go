// Package datasets owns reading tabular data: CSV files (plain or gzip),
// schema inference (numeric, categorical, label), missing values, the
// column-wise Table, seeded random and stratified splits of its rows, and the
// data's fingerprint for provenance.
//
// It knows nothing of voters or bounds; those live in packages voters and
// objective.
//
// # Reading
//
// ReadFile and Read take one streaming pass over the input: a reader
// goroutine hashes the raw bytes (SHA-256, the compressed bytes for gzip,
// which is detected by its magic bytes), cuts the decoded text into blocks
// of whole records, parse workers (GOMAXPROCS of them) split and convert
// the blocks, and the caller's goroutine merges them in input order. Only a
// few blocks of text are in memory at a time; block buffers and parsed
// parts are reused, and the columns are sized from the share of the input
// read, so the peak heap stays close to the size of the finished table.
//
// The rules, chosen here and tested:
//   - Quoting follows RFC 4180: a '"' opens a quoted field only as the
//     field's first byte, "" inside is a quote, and a quoted field may span
//     lines. CRLF and LF both end records, a UTF-8 byte-order mark is
//     dropped, blank lines are skipped.
//   - Header names and unquoted cells are trimmed of surrounding spaces
//     (and tabs, unless tab is the delimiter), so " Species" is the column
//     "Species"; quoted cells are kept exactly.
//   - Missing tokens are compared exactly, case included, after trimming.
//   - A number is a decimal with optional sign, point and exponent, read
//     with correct rounding. inf, infinity and nan (any case) are numbers
//     that are not finite; hex floats and underscores are words.
//   - An inferred column is numeric when every non-missing cell is a finite
//     number. When words are present but more than 90% of the non-missing
//     cells are numbers, the read fails (a stray word, or a non-finite
//     number) naming the first such cell; otherwise the column is
//     categorical, numbers becoming levels in their shortest round-trip
//     form ("1.50" and "1.5" are one level). Force the column categorical
//     to keep the text of every cell as it is.
//   - ReadOptions.DeferKinds skips the stray-word failure (such a column is
//     read categorical), and Table.InferKindsFrom decides the kinds again
//     by the same rule on a subset of the rows: a column whose cells there
//     are all numbers becomes numeric, its other cells missing, and the
//     change is reported. A trainer decides kinds on its prior rows so
//     that the rows it certifies on shape none.
//   - Levels are sorted by their text (byte order) and coded in that
//     order, so no code, and nothing a code decides (ties between levels,
//     the order of one-hot inputs), depends on the order of rows; class
//     names are sorted the same way and the label holds indices into them.
//   - A record, quoted line breaks included, may be at most 1 MiB.
//
// Every error from reading is a *ParseError naming the file, line, column
// and cell, with a sentinel error for errors.Is.
//
// # Splits
//
// RandomSplit draws a uniform random subset of a set size, blind to
// labels and features: the split to certify on. StratifiedSplit and KFold
// keep each class's share in every part, which makes them unfair samples
// of the rows (per-class rounding favours one side); they suit other uses.
// All three draw from math/rand/v2's PCG through our own
// bounded draw and shuffle (see rowGen in split.go), so a seed gives the
// same rows on every platform and Go version; split_test.go pins the
// sequence against an independent Python rendering.
package datasets
