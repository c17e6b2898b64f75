package pipeline

import (
	"fmt"
	"io"
	"sync"
	"time"

	"github.com/vbauerster/mpb/v8"
	"github.com/vbauerster/mpb/v8/decor"
)

// Progress is told when a batch starts, each time a scan finishes, and when
// the batch ends.
type Progress interface {
	Start(total int)
	Done(row SummaryRow, skipped bool)
	Finish()
}

// LineProgress prints one plain line per finished scan, for logs and pipes.
type LineProgress struct {
	W     io.Writer
	total int
	n     int
	t0    time.Time
}

// Start implements Progress.
func (p *LineProgress) Start(total int) { p.total, p.t0 = total, time.Now() }

// Done implements Progress.
func (p *LineProgress) Done(row SummaryRow, skipped bool) {
	p.n++
	switch {
	case row.Status == StatusFailed:
		// Errors name the scan themselves.
		fmt.Fprintf(p.W, "[%d/%d] failed: %s\n", p.n, p.total, row.Error)
	case skipped:
		fmt.Fprintf(p.W, "[%d/%d] %s %s (outputs current, skipped)\n", p.n, p.total, row.Status, row.Path)
	default:
		fmt.Fprintf(p.W, "[%d/%d] %s %s\n", p.n, p.total, row.Status, row.Path)
	}
}

// Finish implements Progress.
func (p *LineProgress) Finish() {}

// BarProgress draws a progress bar with counts, rate and time left, for a
// terminal.
type BarProgress struct {
	W   io.Writer
	mu  sync.Mutex
	p   *mpb.Progress
	bar *mpb.Bar
	t   time.Time
	bad int
}

// Start implements Progress.
func (b *BarProgress) Start(total int) {
	b.p = mpb.New(mpb.WithOutput(b.W), mpb.WithWidth(40))
	b.bar = b.p.AddBar(int64(total),
		mpb.PrependDecorators(decor.Name("scans "), decor.CountersNoUnit("%d/%d")),
		mpb.AppendDecorators(
			decor.AverageSpeed(0, " %.2f/s"),
			decor.Name("  left "), decor.AverageETA(decor.ET_STYLE_GO),
			decor.Any(func(decor.Statistics) string {
				b.mu.Lock()
				defer b.mu.Unlock()
				if b.bad == 0 {
					return ""
				}
				return fmt.Sprintf("  not ok %d", b.bad)
			}),
		))
	b.t = time.Now()
}

// Done implements Progress.
func (b *BarProgress) Done(row SummaryRow, skipped bool) {
	if row.Status != StatusOK {
		b.mu.Lock()
		b.bad++
		b.mu.Unlock()
	}
	b.bar.EwmaIncrement(time.Since(b.t))
	b.t = time.Now()
}

// Finish implements Progress.
func (b *BarProgress) Finish() {
	if !b.bar.Completed() {
		b.bar.Abort(false)
	}
	b.p.Wait()
}
