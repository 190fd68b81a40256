// Package xcheck cross-checks hoplore's Parquet tables with an independent
// reader (Apache arrow-go). It is a separate module so that arrow-go, a
// large dependency, stays out of the tool's own go.mod; only its tests do
// anything.
package xcheck
