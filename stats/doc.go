// Package stats holds the statistics every table, summary and report of
// hoplore shares, so that one number means the same everywhere:
//
//   - the mean of replicates with the half-width of its 95% Student t
//     confidence interval (MeanCI95, Estimate);
//   - a steady-state interval from one run by non-overlapping batch means
//     (BatchMeans, RunInterval, BatchCount, Lag1Limit, Interval);
//   - the end of a run's initial transient by MSER-5 (MSER, MSER5,
//     Truncation);
//   - Holm's adjustment of a family of p-values (Holm);
//   - the formatting of numbers and of estimates with their uncertainty
//     (Sig, PlusMinus, Estimate.Format).
//
// Every function is a pure function of its arguments. Values that are NaN
// or infinite stand for "no value" (a null in a result table) and are left
// out; a statistic of no values is NaN.
package stats
