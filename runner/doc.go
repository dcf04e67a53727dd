// Package runner expands a spec into cells (model × grid value × seed), fits
// them in parallel, caches every seed's fits content-addressed on disk and
// reduces them to per-grid-point risks, bias²/variance/noise splits and their
// standard errors.
package runner
