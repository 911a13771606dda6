// Package datasets owns reading tabular data: CSV files (plain or gzip),
// schema inference (numeric, categorical, label), missing values, the
// column-wise Table, seeded and stratified splits of its rows, and the
// data's fingerprint for provenance.
//
// It knows nothing of voters or bounds; those live in packages voters and
// objective.
package datasets
