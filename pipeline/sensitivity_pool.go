package pipeline

import (
	"context"
	"sync"

	"gapflux/thermal"
)

// sensitivityPool shares the sensitivity table's moved-setting re-solves
// (sensitivityJob) between the goroutines of the scan and of its flat
// twin: each side adds its re-solves once its reported coarse solve is
// done, then both sides' goroutines take re-solves from the pool until
// none is left and no side can add more. The scan's steady solve takes
// longer than its flat twin's, so the flat twin's goroutine, done with its
// own side, runs some of the scan's re-solves instead of waiting. Each
// re-solve writes only its own result, and its result does not depend on
// the goroutine or solver that runs it, so the table is the same whatever
// the scheduling. A nil pool holds no re-solves.
type sensitivityPool struct {
	mu   sync.Mutex
	more *sync.Cond
	jobs []*sensitivityJob // added, not yet taken; taken first in, first out
	open int               // sides that may still add re-solves
}

// newSensitivityPool returns an empty pool that waits for sides sides to
// add their re-solves (done).
func newSensitivityPool(sides int) *sensitivityPool {
	p := &sensitivityPool{open: sides}
	p.more = sync.NewCond(&p.mu)
	return p
}

// add puts one side's re-solves into the pool.
func (p *sensitivityPool) add(jobs []*sensitivityJob) {
	if p == nil || len(jobs) == 0 {
		return
	}
	p.mu.Lock()
	p.jobs = append(p.jobs, jobs...)
	p.mu.Unlock()
	p.more.Broadcast()
}

// done records that one side has added all its re-solves (none when its
// solves failed). Each side must call it once, also when it panics, or
// work would wait for that side for ever.
func (p *sensitivityPool) done() {
	if p == nil {
		return
	}
	p.mu.Lock()
	p.open--
	p.mu.Unlock()
	p.more.Broadcast()
}

// take returns the next re-solve, waiting while the pool is empty and a
// side may still add some; nil when none is left.
func (p *sensitivityPool) take() *sensitivityJob {
	p.mu.Lock()
	defer p.mu.Unlock()
	for len(p.jobs) == 0 && p.open > 0 {
		p.more.Wait()
	}
	if len(p.jobs) == 0 {
		return nil
	}
	j := p.jobs[0]
	p.jobs = p.jobs[1:]
	return j
}

// work runs re-solves from the pool on solver sv until none is left (a
// cancelled ctx makes each remaining one fail at once).
func (p *sensitivityPool) work(ctx context.Context, sv *thermal.Solver) {
	if p == nil {
		return
	}
	for j := p.take(); j != nil; j = p.take() {
		j.run(ctx, sv)
	}
}
