package main

import (
	"fmt"
	"io"
	"os"
	"strings"
	"sync"
	"time"

	"riskgrid/runner"
)

// isTerminal reports whether w is a terminal (a character device), the
// only place where a progress line that redraws itself makes sense. Tests
// replace it.
var isTerminal = func(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	fi, err := f.Stat()
	return err == nil && fi.Mode()&os.ModeCharDevice != 0
}

// The progress line appears once a run has lasted progressAfter and is
// redrawn at most every progressEvery. Tests shorten both.
var (
	progressAfter = time.Second
	progressEvery = 200 * time.Millisecond
)

// meter draws the progress of one run on a single terminal line, redrawn in
// place with a carriage return: cells done of the total, how many came from
// the cache, the rate of fitted cells and the time left at that rate. It is
// the Progress callback and the warning Log of the run: a warning first
// clears the line, so that it is not printed into it. When off (stderr is
// not a terminal, or --quiet) it draws nothing and passes warnings through.
type meter struct {
	w     io.Writer
	name  string
	on    bool
	start time.Time

	mu    sync.Mutex
	p     runner.Progress
	last  time.Time // of the last draw
	width int       // of the line on screen, 0 when none

	stop chan struct{}
	done chan struct{}
}

// startMeter starts a meter for the run of spec name; when on, a ticker
// redraws the line so that the time keeps moving during a long seed.
func startMeter(w io.Writer, name string, on bool) *meter {
	m := &meter{w: w, name: name, on: on, start: time.Now()}
	if on {
		m.stop, m.done = make(chan struct{}), make(chan struct{})
		go m.tick()
	}
	return m
}

func (m *meter) tick() {
	defer close(m.done)
	t := time.NewTicker(max(progressEvery, time.Millisecond))
	defer t.Stop()
	for {
		select {
		case <-m.stop:
			return
		case now := <-t.C:
			m.mu.Lock()
			m.draw(now)
			m.mu.Unlock()
		}
	}
}

// update is the runner's Progress callback. Calls may arrive out of order:
// the furthest count is kept.
func (m *meter) update(p runner.Progress) {
	if !m.on {
		return
	}
	m.mu.Lock()
	defer m.mu.Unlock()
	if p.Computed+p.Cached >= m.p.Computed+m.p.Cached {
		m.p = p
	}
	m.draw(time.Now())
}

// draw redraws the line if the run has lasted progressAfter and the last
// draw is progressEvery old. m.mu is held.
func (m *meter) draw(now time.Time) {
	if now.Sub(m.start) < progressAfter || now.Sub(m.last) < progressEvery || m.p.Total == 0 {
		return
	}
	m.last = now
	line := progressLine(m.name, m.p, now.Sub(m.start))
	n := len([]rune(line))
	pad := strings.Repeat(" ", max(0, m.width-n))
	fmt.Fprintf(m.w, "\r%s%s", line, pad)
	m.width = n
}

// clear wipes the line from the screen. m.mu is held.
func (m *meter) clear() {
	if m.width > 0 {
		fmt.Fprintf(m.w, "\r%s\r", strings.Repeat(" ", m.width))
		m.width = 0
	}
}

// Write passes a warning through, clearing the progress line first.
func (m *meter) Write(b []byte) (int, error) {
	m.mu.Lock()
	defer m.mu.Unlock()
	m.clear()
	return m.w.Write(b)
}

// finish stops the ticker and clears the line.
func (m *meter) finish() {
	if !m.on {
		return
	}
	close(m.stop)
	<-m.done
	m.mu.Lock()
	m.clear()
	m.mu.Unlock()
}

// progressLine says how far a run is:
//
//	riskgrid: NAME: 1200/8200 cells (300 from the cache), 450 cells/s, 16s left
//
// The rate counts fitted cells only (cached ones cost next to nothing), and
// the time left assumes every remaining cell must be fitted, so it errs on
// the long side when more of them are cached.
func progressLine(name string, p runner.Progress, elapsed time.Duration) string {
	done := p.Computed + p.Cached
	s := fmt.Sprintf("riskgrid: %s: %d/%d cells (%d from the cache)", name, done, p.Total, p.Cached)
	if p.Computed == 0 || elapsed <= 0 {
		return s
	}
	rate := float64(p.Computed) / elapsed.Seconds()
	left := time.Duration(float64(p.Total-done) / rate * float64(time.Second))
	return fmt.Sprintf("%s, %.0f cells/s, %s left", s, rate, shortDuration(left))
}

// shortDuration prints d rounded to the second as 16s, 2m05s or 1h02m.
func shortDuration(d time.Duration) string {
	d = d.Round(time.Second)
	switch {
	case d < time.Minute:
		return fmt.Sprintf("%ds", int(d.Seconds()))
	case d < time.Hour:
		return fmt.Sprintf("%dm%02ds", int(d.Minutes()), int(d.Seconds())%60)
	}
	return fmt.Sprintf("%dh%02dm", int(d.Hours()), int(d.Minutes())%60)
}
