// Package trainer owns the pipeline that turns a table into a certified
// vote: the seeded split into prior rows and certify rows, the
// pool and the prior built on the prior rows only, the statistics counted on
// the certify rows, the optimisation of the posterior, the certificate with
// its delta ledger, the model file, checks of a vote on fresh rows and the
// monitoring ledger of repeated checks (delta spent as 6/(pi^2 k^2) over
// the checks, so all their verdicts hold at once).
//
// # Honest accounting
//
// The certify rows are a uniform random subset of the rows whose size
// depends only on the row count and Config.PriorFraction
// (datasets.RandomSplit): blind to labels and features, so they are a fair
// sample, rare classes included. Every voter (thresholds, linear weights,
// scaling, categories) and the prior are fixed from the prior rows before
// a certify row is looked at.
// The posterior may depend on the certify rows: the kl-based bounds hold for
// every posterior at once. The certificate is the smallest of several
// families (first order, tandem, C-bound for two classes, Chebyshev-Cantelli,
// and a hold-out family that certifies the vote fitted on the prior rows
// with the binomial test-set bound); since the smallest is chosen after all
// are seen, and the per-class (and cost) certificates must hold with it,
// each line of the ledger is computed at delta divided by the number of
// lines. m in every bound is the number of certify rows.
//
// # Model files a reviewer can trust
//
// Every read of a model file (DecodeModel, ReadModelFile) recomputes each
// ledger entry from its stored terms, checks that the certificate is what
// the ledger says, and checks a SHA-256 content hash (AuditLedger,
// Integrity); VerifyData redoes the whole certificate from the training
// table and the stored settings.
//
// # Optimiser
//
// The posterior is parametrised by softmax logits and fitted with gonum's
// L-BFGS. Several starting points are tried (the prior, uniform weights,
// and Gibbs posteriors at a few temperatures) and the best is used; the
// optimiser keeps the best point it evaluates, so the final value never
// exceeds any starting point's. The objective depends on the data only
// through the per-voter error rates and the joint-error matrix, so a step
// costs O(n^2) for n voters, whatever the number of rows.
//
// Parsing flags and printing belong to cmd/surety; everything a library user
// needs is here and in package voters.
package trainer
