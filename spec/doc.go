// Package spec reads, checks and resolves riskgrid experiment specs (TOML):
// the data source, the model families, the capacity grid and the seeds. A
// resolved spec has every default filled in, prints as canonical TOML and
// hashes to the content address of its results.
package spec
