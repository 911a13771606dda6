// Package voters owns the voter pool of a Surety vote: the voter kinds
// (numeric stumps, category stumps, linear voters), building a pool from the
// prior rows only, evaluating a pool over rows into compact error bit sets,
// the sufficient statistics every objective needs (per-voter error counts
// and joint-error counts), the weighted majority vote and its prediction,
// and the JSON form of every voter kind.
//
// It computes no bounds (package objective does) and reads no files
// (package datasets does).
//
// # Voter kinds
//
// A [Stump] reads one numeric column: it predicts one class at or below its
// threshold and another above it. Thresholds are the k/(T+1) empirical
// quantiles (k = 1..T, lower value, no interpolation) of the prior rows'
// non-missing values, deduplicated; a threshold at the column's prior-row
// maximum splits nothing and is dropped. For each threshold, each class c
// and each side s, the pool holds the stump that predicts c on side s and,
// on the other side, the class other than c most frequent among the prior
// rows there (ties to the lower class index); identical stumps are kept
// once. For two classes this is exactly each stump and its complement (two
// per threshold). For k classes it gives every class a voter on every side
// of every split, so the vote can move weight to any class in any region; a
// pool of majority-only stumps would never vote for a minority class.
//
// A [CategoryStump] reads one categorical column: "column equals level"
// against the rest, with the same class rule. Its levels are the MaxLevels
// levels most frequent among the prior rows; a column with exactly two
// levels gets stumps for one of them only (the other level's stumps would be
// the same voters). A level seen only outside the prior rows goes with the
// rest; so does every level of a table that lacks the stump's level.
//
// Missing cells (NaN, datasets.MissingCode): a stump sends them to the side
// whose class agrees with more of the prior rows that have the cell
// missing; on a tie (for instance when no prior row has it missing) to the
// side that holds more prior rows, then to the lower side ("at or below",
// "equals").
//
// A [Linear] voter is an L2-regularised multinomial logistic regression
// (softmax over the classes; for two classes a single score vector, as in
// binary logistic regression) fitted with gonum's optimize.LBFGS on a random
// subset of the columns and a bootstrap sample of the prior rows, of
// PoolConfig.LinearRows rows (20000 by default; as many as there are prior
// rows when there are fewer). Numeric
// inputs are standardised with the mean and standard deviation of all the
// prior rows (a constant column keeps scale 1); a missing numeric cell is
// the prior-row mean, 0 after standardising. Categorical inputs are one-hot
// over the levels seen in the prior rows; missing and unseen levels are all
// zeros. It predicts the class of largest score, ties to the lower class
// index. The objective is the mean cross-entropy plus L2/2 times the squared
// norm of the weights (intercepts are not penalised), which is
// scikit-learn's LogisticRegression with C = 1/(L2 n) on n rows.
//
// The full linear voter (on unless PoolConfig.NoFullLinear) is the same
// model on every usable column (numeric columns constant on the prior rows
// left out), fitted by [FitLinearCV] on the prior rows (at most
// PoolConfig.LinearRows of them) with its strength chosen by stratified
// 5-fold cross-validation over [DefaultCGrid] by out-of-fold log-loss.
// It is the pool's last voter, after the bootstrap linear voters, and
// draws from the rng after them, so the rest of the pool is the same with
// or without it.
//
// # Out-of-sample rows
//
// A later weighting step may score the linear voters on prior rows they
// were not fitted on: [Pool].OutOfBag holds each bootstrap voter's
// out-of-bag rows, [Pool].OutOfFold the full voter's out-of-fold classes.
// Stumps need neither: their thresholds are label-free quantiles and the
// labels only pick each split's pair of classes and missing-cell side from
// class counts, so their prior-row error is only mildly optimistic.
//
// # Pool size
//
// PoolConfig.MaxVoters (2048 by default) caps the pool, linear voters
// included, since the joint-error counts grow with its square. When the
// stumps outnumber MaxVoters minus the linear voters (the full one
// included), BuildPool keeps those
// that get the fewest prior rows wrong (a missing cell counted on the side
// the stump's missing rule sends it), ties to the earlier stump, and keeps
// them in pool order: columns in table order, then thresholds or levels,
// then the pairs of the class rule. The counts come from the class counts
// the stumps are built from, so the choice sees the prior rows only. A wide
// table can lose every stump of some columns; with two classes a stump
// usually outlives its complement, which errs on the other rows. Linear
// voters draw their columns from every column with a present prior-row
// value, whether or not a kept stump reads it.
//
// [Pool].Schema lists the columns some kept voter reads (stump or linear),
// in table order; a table must have those to bind the pool, and needs no
// other. A column with no split and no linear voter on it is not listed.
//
// # Binding
//
// Voters refer to columns by name and to categories by their strings. Bind
// resolves them on a table (its column indices and category codes), so a
// vote built on one file predicts on another; a missing column or a kind
// mismatch is an error naming the column. Binding is state held by the
// voters: a voter, and a Pool or Vote holding it, serves one table at a
// time and is not safe for concurrent binding to different tables.
//
// # Statistics
//
// [Pool.Count] makes one pass over rows in panels of 4096 rows: it gathers
// each column once per panel, evaluates every voter into a bit set of its
// errors (one bit per row), and counts the joint errors of every pair with
// popcounts over 64-row words in 4x4 register tiles. Panels are shared among
// up to GOMAXPROCS goroutines, each with its own integer counts, merged in
// worker order; integer sums make the result identical at any GOMAXPROCS.
// Statistics of disjoint row sets add up ([Stats.Merge]).
//
// # Serialisation
//
// [MarshalVoters] and [UnmarshalVoters] write and read a JSON array of
// voters, each an object with a "kind" tag ("stump", "category", "linear").
// [Vote] implements json.Marshaler and json.Unmarshaler with them.
package voters
