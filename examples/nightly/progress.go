package main

import (
	"fmt"
	"io"
	"os"
	"strings"
	"sync"
)

// progress draws a one-line progress bar on stderr when, and only when,
// stderr is a terminal (a character device); otherwise it only passes the
// log records through. It is the writer the logger writes to, so that it can
// clear its line before a record and redraw it after.
type progress struct {
	mu       sync.Mutex
	w        io.Writer
	on       bool
	total    int
	finished int
	name     string
	drawn    bool
}

func newProgress(w io.Writer, total int) *progress {
	p := &progress{w: w, total: total}
	if f, ok := w.(*os.File); ok {
		if st, err := f.Stat(); err == nil && st.Mode()&os.ModeCharDevice != 0 {
			p.on = true
		}
	}
	return p
}

// Write passes a log record through, keeping the bar below it.
func (p *progress) Write(b []byte) (int, error) {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.clear()
	n, err := p.w.Write(b)
	p.draw()
	return n, err
}

// step starts the named step.
func (p *progress) step(name string) {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.name != "" {
		p.finished++
	}
	p.name = name
	p.clear()
	p.draw()
}

// done removes the bar.
func (p *progress) done() {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.clear()
	p.on = false
}

func (p *progress) clear() {
	if p.on && p.drawn {
		fmt.Fprint(p.w, "\r\033[K")
		p.drawn = false
	}
}

func (p *progress) draw() {
	if !p.on || p.name == "" {
		return
	}
	const width = 28
	fill := width * p.finished / p.total
	fmt.Fprintf(p.w, "[%s%s] %d/%d %s", strings.Repeat("#", fill), strings.Repeat(".", width-fill), p.finished+1, p.total, p.name)
	p.drawn = true
}
