// Package models holds the model families riskgrid fits along a capacity
// grid. Each family fits a whole path of grid values from one training
// sample, so that nested feature sets and penalty paths share their
// factorizations.
package models
