// Package data makes the samples of an experiment: generators with a known
// truth (so risks can be exact) and CSV files (truth unknown, a held-out
// test set), with random streams whose algorithm the project pins itself.
package data
