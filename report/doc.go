// Package report turns an experiment's result tables (runs.parquet,
// series.parquet, links.parquet, recoveries.parquet) into charts, a
// self-contained HTML page and paired comparisons of agents.
//
// It owns:
//
//   - reading the tables by column name (Load), tolerant of the writer's
//     exact Parquet types, with nulls read as NaN;
//   - aggregation across replicates (LoadCurves, EventCurves, ChannelHeat,
//     TimeHeat, CellTable): means with 95% Student t confidence intervals
//     (stats.MeanCI95); the runs.parquet columns charted and compared are
//     those the results schema marks (results.Charted), and any numeric
//     runs.parquet column can be compared or tabulated by name;
//   - charts drawn with gonum/plot in one visual style: Okabe–Ito colours
//     with a distinct dash and marker per agent, viridis heat maps, units on
//     every axis; written as SVG and PNG, and embedded in the page as SVG
//     data URLs that follow the viewer's light or dark colour scheme;
//   - the page (Write, Report.HTML), which loads nothing from outside and
//     marks <body data-images="ok"> once every chart has decoded;
//   - paired statistics (Compare, PairedTTest, WilcoxonSignedRank) and the
//     compare.parquet table (WriteComparisons).
//
// Output is a pure function of the tables and Options: no dates, no random
// identifiers, fonts named rather than embedded unless asked.
package report
