// Package onnxexport writes a vote (voters.Vote) as an ONNX model that any
// ONNX runtime can run, giving on every row the class and margin that
// Vote.Predict gives. It owns the mapping of each voter kind to standard
// ONNX operators and the layout of the model's inputs and outputs; reading
// model files and the certificate are the trainer's, the command that
// writes the file is cmd/surety's (the caller puts the certificate in
// Options.Metadata, written as the model's metadata_props).
//
// # The file
//
// IR version 8 with the default operator set at version 17 (ONNX 1.12),
// and ai.onnx.ml at version 2 when a categorical column is read (one
// LabelEncoder per such column). Every number is a double: thresholds,
// means, scales, linear weights and vote weights are stored as their IEEE
// bits and compared or combined as float64, so a threshold is never rounded
// to float32 (one ulp moves rows across it).
//
// # Inputs
//
// One tensor per column of the schema, named as the column, shape [N] (N
// rows of a batch). A numeric column is a double tensor, NaN where the cell
// is missing; +Inf and -Inf are values like any other (+Inf is above every
// threshold, -Inf below). A categorical column is a string tensor holding
// the cell's text; the empty string is a missing cell, and a text that no
// voter names is an unseen category (Inputs lists them).
//
// # Outputs
//
//   - vote_class (string [N]): the class name.
//   - vote_class_index (int64 [N]): its index in the vote's classes.
//   - vote_margin (double [N]): the winning class's total weight minus the
//     runner-up's; 0 is a tie, which goes to the lower class index.
//   - vote_totals (double [N, K]): each class's total weight.
//
// # Exactness
//
// The graph does the arithmetic of the Go code, in its order: a stump's
// "v <= threshold" with NaN sent to its missing side; a linear voter's
// score Bias[c] + sum over features of (w * (x - mean)) / scale, features
// added one at a time in input order (a Scan), NaN inputs adding nothing,
// its class the first of largest score (a score that is NaN never wins);
// class totals added voter by voter (a Scan) in the order Vote.Predict adds
// them (numeric stumps grouped by column and threshold, then category
// stumps by column and level, then the other voters), so that exact ties
// stay ties. Floating-point addition is not associative, so a reduction or
// matrix product, whose order a runtime chooses, could move a near-tie.
package onnxexport
