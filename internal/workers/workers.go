// Package workers runs independent jobs on a fixed number of goroutines:
// the library's one pool for the site model's per-setting laws.
//
// It is internal on purpose: the public packages offer results (laws,
// plans), not a scheduler; a caller who wants parallelism of its own uses
// the standard library.
package workers

import (
	"errors"
	"sync"
)

// Run runs work(0 … n−1) on workers goroutines (a count below 1 means 1)
// and returns their errors joined (nil when none failed), in index order
// whatever the schedule. after, if not nil, is called under a lock after
// each item with the number of items finished so far. Each call of work
// should write only its own slot, so that the outcome does not depend on
// the schedule.
func Run(n, workers int, work func(i int) error, after func(i, finished int)) error {
	return RunEach(n, workers, func() struct{} { return struct{}{} }, func(_ struct{}, i int) error { return work(i) }, after)
}

// RunEach is Run with a value of each worker's own: fresh makes one per
// worker goroutine, and work(v, i) gets the value of the worker that runs
// item i, which no other item has at the same time: working memory that
// one item leaves to the next. Which worker runs which item depends on
// the schedule, so the outcome must not depend on what v holds when work
// starts.
func RunEach[V any](n, workers int, fresh func() V, work func(v V, i int) error, after func(i, finished int)) error {
	if workers < 1 {
		workers = 1
	}
	errs := make([]error, n)
	next := make(chan int)
	var mu sync.Mutex
	finished := 0
	var wg sync.WaitGroup
	for range min(workers, n) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			v := fresh()
			for i := range next {
				errs[i] = work(v, i)
				mu.Lock()
				finished++
				if after != nil {
					after(i, finished)
				}
				mu.Unlock()
			}
		}()
	}
	for i := range n {
		next <- i
	}
	close(next)
	wg.Wait()
	return errors.Join(errs...)
}
