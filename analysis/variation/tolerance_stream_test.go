package variation

import (
	"context"
	"slices"
	"sync/atomic"
	"testing"

	"nodal/mna"
)

// TestStreamJobsConsumesInOrder: whatever the worker count, consume sees
// 0, 1, 2, … with each job's own result, and a cancellation leaves exactly
// a prefix.
func TestStreamJobsConsumesInOrder(t *testing.T) {
	for _, workers := range []int{1, 2, 7} {
		var got []int
		n := streamJobs(context.Background(), 1000, workers, nil, func(_, i int) int { return i * i }, func(i, v int) {
			if v != i*i {
				t.Fatalf("workers %d: job %d gave %d", workers, i, v)
			}
			got = append(got, i)
		})
		if n != 1000 || len(got) != 1000 || !slices.IsSorted(got) || got[999] != 999 {
			t.Errorf("workers %d: consumed %d, %v…", workers, n, got[:min(5, len(got))])
		}
		ctx, cancel := context.WithCancel(context.Background())
		var started atomic.Int64
		var seen []int
		n = streamJobs(ctx, 100000, workers, func(done int) {
			if done == 300 {
				cancel()
			}
		}, func(_, i int) int { started.Add(1); return i }, func(i, _ int) { seen = append(seen, i) })
		if n != len(seen) || n < 300 || n >= 100000 || seen[n-1] != n-1 || started.Load() > int64(n+streamWindowPerWorker*workers) {
			t.Errorf("workers %d: cancelled at 300, consumed %d (last %d), %d started", workers, n, seen[len(seen)-1], started.Load())
		}
	}
}

// TestEnvelopeInterruptedIsFirstRuns: an envelope stopped after N runs is
// the envelope of --runs N with the same seed, bit for bit.
func TestEnvelopeInterruptedIsFirstRuns(t *testing.T) {
	c := tolLoad(t, tolRC)
	freqs := []float64{100, 1000, 10e3}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	opt := MonteCarloOptions{Runs: 100000, Seed: 5, Workers: 2, Progress: func(done int) {
		if done == 200 {
			cancel()
		}
	}}
	part, err := Envelope(ctx, c, mna.Input{}, mna.Output{Node: "out"}, freqs, opt)
	if err != nil {
		t.Fatal(err)
	}
	if !part.Cancelled || part.Finished < 200 || part.Finished >= opt.Runs {
		t.Fatalf("cancelled %v after %d runs", part.Cancelled, part.Finished)
	}
	full, err := Envelope(context.Background(), c, mna.Input{}, mna.Output{Node: "out"}, freqs, MonteCarloOptions{Runs: part.Finished, Seed: 5, Workers: 3})
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(part.MinDB, full.MinDB) || !slices.Equal(part.MaxDB, full.MaxDB) || !slices.Equal(part.MaxPhaseDeg, full.MaxPhaseDeg) {
		t.Errorf("interrupted at %d: %v..%v; --runs %d: %v..%v", part.Finished, part.MinDB, part.MaxDB, part.Finished, full.MinDB, full.MaxDB)
	}
}
