package variation

import (
	"context"
	"math/rand/v2"
	"runtime"
	"sync"
	"sync/atomic"

	"nodal/netlist"
)

// runStream returns the random stream of Monte Carlo run number run: a PCG
// generator (math/rand/v2) seeded with (seed, splitmix64(run)), so every
// run's draws depend on the seed and the run index alone, never on which
// worker made them or in what order.
func runStream(seed uint64, run int) *rand.Rand {
	return rand.New(rand.NewPCG(seed, splitmix64(uint64(run))))
}

// splitmix64 is the SplitMix64 finaliser (Steele, Lea and Flood, "Fast
// splittable pseudorandom number generators", OOPSLA 2014): it spreads
// consecutive run indices over the whole 64-bit seed space.
func splitmix64(x uint64) uint64 {
	x += 0x9e3779b97f4a7c15
	x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9
	x = (x ^ (x >> 27)) * 0x94d049bb133111eb
	return x ^ (x >> 31)
}

// drawFactors fills dst (len(vars)) with the multiplicative factors of run
// run, one draw per Variation in order (a toleranced `let` is one item, so
// all its uses move together):
//
//   - Uniform: 1 + Rel·(2u − 1) with u uniform on [0, 1): nominal·(1 ± tol).
//   - Normal: 1 + (Rel/3)·z with z standard normal, σ = tol/3. The draws
//     are NOT truncated: about 0.27 % of them fall outside ±tol. A factor
//     ≤ 0 (possible only for tolerances near 100 %) makes the run fail.
func drawFactors(vars []netlist.Variation, seed uint64, run int, dst []float64) {
	fillFactors(vars, runStream(seed, run), dst)
}

// drawer makes drawFactors' draws for one goroutine with one generator,
// reseeded for each run (the same stream as runStream's, so the same
// factors) instead of made anew.
type drawer struct {
	pcg rand.PCG
	rng *rand.Rand
}

func newDrawer() *drawer {
	d := &drawer{}
	d.rng = rand.New(&d.pcg)
	return d
}

// draw fills dst with the factors of run run, as drawFactors does.
func (d *drawer) draw(vars []netlist.Variation, seed uint64, run int, dst []float64) {
	d.pcg.Seed(seed, splitmix64(uint64(run)))
	fillFactors(vars, d.rng, dst)
}

// fillFactors fills dst with one factor per Variation from rng (see
// drawFactors).
func fillFactors(vars []netlist.Variation, rng *rand.Rand, dst []float64) {
	for i, v := range vars {
		if v.Tol.Dist == netlist.Normal {
			dst[i] = 1 + v.Tol.Rel/3*rng.NormFloat64()
		} else {
			dst[i] = 1 + v.Tol.Rel*(2*rng.Float64()-1)
		}
	}
}

// resolveWorkers returns the worker count for n jobs: workers ≤ 0 means
// runtime.NumCPU(); never more than n, never less than 1.
func resolveWorkers(workers, n int) int {
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	return max(1, min(workers, n))
}

// forEachJob calls job(worker, i) for every i in [0, n) on workers
// goroutines, worker in [0, resolveWorkers(workers, n)) (job must store
// its result by i), and progress(done) after each finished job, serialised
// and with done increasing. When ctx is cancelled no new job starts; it
// returns the number of jobs finished and whether it stopped early.
func forEachJob(ctx context.Context, n, workers int, progress func(done int), job func(worker, i int)) (finished int, cancelled bool) {
	workers = resolveWorkers(workers, n)
	var next atomic.Int64
	var mu sync.Mutex
	done := 0
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func(w int) {
			defer wg.Done()
			for ctx.Err() == nil {
				i := int(next.Add(1) - 1)
				if i >= n {
					return
				}
				job(w, i)
				mu.Lock()
				done++
				if progress != nil {
					progress(done)
				}
				mu.Unlock()
			}
		}(w)
	}
	wg.Wait()
	return done, done < n
}

// isDone reports whether ctx's Done channel is closed, without counting as
// a call of ctx.Err.
func isDone(ctx context.Context) bool {
	select {
	case <-ctx.Done():
		return true
	default:
		return false
	}
}

// streamWindowPerWorker bounds how far the workers of streamJobs may run
// ahead of the oldest unfinished job: at most this many results per worker
// wait for their turn, so memory does not grow with n.
const streamWindowPerWorker = 64

// streamJobs runs job(worker, i) for every i in [0, n) on workers
// goroutines and hands each result to consume in index order (consume
// calls are serialised), then calls progress with the number consumed so
// far. At most streamWindowPerWorker·workers results wait for their turn.
// ctx is checked once before each job; once it is cancelled no new job
// starts and results after the first gap are dropped, so consume has seen
// exactly jobs 0 … consumed−1: an
// interrupted Monte Carlo covers the first N draws, which the same seed
// with N runs reproduces.
func streamJobs[T any](ctx context.Context, n, workers int, progress func(done int), job func(worker, i int) T, consume func(i int, v T)) (consumed int) {
	workers = resolveWorkers(workers, n)
	window := streamWindowPerWorker * workers
	var mu sync.Mutex
	turn := sync.NewCond(&mu)
	pending := make(map[int]T, window)
	next, prefix := 0, 0
	stopped := false
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func(w int) {
			defer wg.Done()
			for {
				mu.Lock()
				for !stopped && next < n && next >= prefix+window {
					turn.Wait()
				}
				if stopped || next >= n || ctx.Err() != nil {
					stopped = stopped || next < n
					turn.Broadcast()
					mu.Unlock()
					return
				}
				i := next
				next++
				mu.Unlock()
				v := job(w, i)
				mu.Lock()
				pending[i] = v
				for !stopped && !isDone(ctx) {
					v, ok := pending[prefix]
					if !ok {
						break
					}
					delete(pending, prefix)
					consume(prefix, v)
					prefix++
					if progress != nil {
						progress(prefix)
					}
				}
				turn.Broadcast()
				mu.Unlock()
			}
		}(w)
	}
	wg.Wait()
	return prefix
}
