// Package objective owns the arithmetic of Surety's guarantees: the binary
// kl divergence and its inverses, Maurer's xi(m), every PAC-Bayesian bound
// of the field guide with the terms that made it, the fresh-data bounds
// (binomial and hypergeometric tail inversion), the empirical quantities a
// bound needs as functions of the posterior weights, their gradients, and
// the objectives the trainer minimises.
//
// It is pure math on plain slices and numbers: it reads no files and knows
// nothing of tables, voters or the command line. Counting the statistics
// (voter error rates, joint-error rates) is the voters package's job;
// choosing bounds, splitting delta between them and writing certificates
// is the trainer's.
//
// What each bound's Value bounds is in its Of field and its doc comment:
// the Gibbs risk R(Q) for the kl, Pinsker, Catoni and lambda bounds, the
// majority vote's risk R(MV_Q) for the first-order, tandem, C-bound and
// Chebyshev-Cantelli bounds, a fixed classifier's error rate for the
// test-set bound, and the error rate on the unlabelled rows for the
// finite-population bound. Values are never clamped: a vote bound of 1 or
// more is true and says nothing (it is vacuous).
//
// Arguments out of range (delta outside (0, 1), m < 1, an empirical rate
// outside [0, 1], a negative or infinite KL) are errors wrapping ErrRange.
package objective
