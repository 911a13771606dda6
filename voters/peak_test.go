package voters

import (
	"runtime"
	"sync"
	"time"
)

// peakHeap samples HeapAlloc every millisecond until stop.
type peakHeap struct {
	done chan struct{}
	wg   sync.WaitGroup
	peak uint64
}

func newPeakHeap() *peakHeap {
	p := &peakHeap{done: make(chan struct{})}
	p.wg.Go(func() {
		var ms runtime.MemStats
		tick := time.NewTicker(time.Millisecond)
		defer tick.Stop()
		for {
			runtime.ReadMemStats(&ms)
			p.peak = max(p.peak, ms.HeapAlloc)
			select {
			case <-p.done:
				return
			case <-tick.C:
			}
		}
	})
	return p
}

// stop ends the sampling and returns the peak HeapAlloc seen.
func (p *peakHeap) stop() uint64 {
	close(p.done)
	p.wg.Wait()
	return p.peak
}
