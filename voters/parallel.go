package voters

import (
	"runtime"
	"sync"
	"sync/atomic"
)

// parallelFor runs item(i) for i in [0, n) over min(GOMAXPROCS, n)
// goroutines, each taking the next item as it finishes one. newWorker
// makes one goroutine's item function, so a worker may keep scratch space
// from item to item. Callers write each result to its own index, so the
// outcome does not depend on the number of goroutines.
func parallelFor(n int, newWorker func() func(i int)) {
	var next atomic.Int64
	var wg sync.WaitGroup
	for range max(1, min(runtime.GOMAXPROCS(0), n)) {
		wg.Go(func() {
			item := newWorker()
			for {
				i := int(next.Add(1) - 1)
				if i >= n {
					return
				}
				item(i)
			}
		})
	}
	wg.Wait()
}
