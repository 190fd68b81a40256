// Package stats holds the statistics every table, summary and report of
// hoplore shares, so that one number means the same everywhere:
//
//   - the mean of replicates with the half-width of its 95% Student t
//     confidence interval (MeanCI95, Estimate);
//   - the formatting of numbers and of estimates with their uncertainty
//     (Sig, PlusMinus, Estimate.Format).
//
// Every function is a pure function of its arguments. Values that are NaN
// or infinite stand for "no value" (a null in a result table) and are left
// out; a statistic of no values is NaN.
package stats
