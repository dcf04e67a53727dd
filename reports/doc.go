// Package reports renders a run's Result as terminal, Markdown and CSV tables.
package reports
