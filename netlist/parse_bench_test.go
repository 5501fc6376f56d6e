package netlist

import (
	"fmt"
	"runtime"
	"runtime/metrics"
	"strings"
	"sync/atomic"
	"testing"
	"time"
)

// ladderSource is the text of a uniform RC ladder of k sections (2k+1
// parts).
func ladderSource(k int) []byte {
	var b strings.Builder
	b.WriteString("Vin: voltage source (n0, gnd) 1\n")
	for j := 1; j <= k; j++ {
		fmt.Fprintf(&b, "R%d: resistor (n%d, n%d) 1k\nC%d: capacitor (n%d, gnd) 10n\n", j, j-1, j, j, j)
	}
	return []byte(b.String())
}

// BenchmarkParse100k parses (participle grammar, line by line) a file of
// 100,001 parts; the target is under 1 s. B/byte is the bytes allocated
// per input byte (mostly participle's short-lived parse state) and
// live-B/byte the heap the parsed File keeps per input byte.
func BenchmarkParse100k(b *testing.B) {
	src := ladderSource(50000)
	b.SetBytes(int64(len(src)))
	b.ReportAllocs()
	var before, after runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&before)
	var f *File
	for i := 0; i < b.N; i++ {
		var err error
		if f, err = Parse("ladder.nodal", src); err != nil {
			b.Fatal(err)
		}
	}
	b.StopTimer()
	runtime.ReadMemStats(&after)
	b.ReportMetric(float64(after.TotalAlloc-before.TotalAlloc)/float64(b.N)/float64(len(src)), "B/byte")
	runtime.GC()
	runtime.ReadMemStats(&after)
	b.ReportMetric(float64(int64(after.HeapAlloc)-int64(before.HeapAlloc))/float64(len(src)), "live-B/byte")
	runtime.KeepAlive(f)
}

// BenchmarkLoad100k parses and elaborates a file of 100,001 parts (the
// target is under 1 s); B/byte and live-B/byte as in BenchmarkParse100k,
// live-B/byte being what the Circuit keeps, and peak-B/byte the highest
// heap seen during one Load (live and garbage not yet collected, sampled
// every 0.2 ms; the figure a process's memory follows) per input byte.
func BenchmarkLoad100k(b *testing.B) {
	src := ladderSource(50000)
	b.SetBytes(int64(len(src)))
	b.ReportAllocs()
	var before, after runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&before)
	var c *Circuit
	var peak uint64
	for i := 0; i < b.N; i++ {
		var err error
		p := peakHeap(func() { c, err = Load("ladder.nodal", src, nil) })
		if err != nil {
			b.Fatal(err)
		}
		peak = max(peak, p)
		if i < b.N-1 {
			c = nil
		}
	}
	b.StopTimer()
	runtime.ReadMemStats(&after)
	b.ReportMetric(float64(after.TotalAlloc-before.TotalAlloc)/float64(b.N)/float64(len(src)), "B/byte")
	b.ReportMetric(float64(peak)/float64(len(src)), "peak-B/byte")
	runtime.GC()
	runtime.ReadMemStats(&after)
	b.ReportMetric(float64(int64(after.HeapAlloc)-int64(before.HeapAlloc))/float64(len(src)), "live-B/byte")
	runtime.KeepAlive(c)
}

// peakHeap runs f after a collection and returns the highest heap (bytes
// of heap objects, live or not yet collected) above the heap before it,
// sampled while f runs.
func peakHeap(f func()) uint64 {
	runtime.GC()
	sample := []metrics.Sample{{Name: "/memory/classes/heap/objects:bytes"}}
	read := func() uint64 { metrics.Read(sample); return sample[0].Value.Uint64() }
	base := read()
	var done atomic.Bool
	var peak atomic.Uint64
	stopped := make(chan struct{})
	go func() {
		defer close(stopped)
		s := []metrics.Sample{{Name: sample[0].Name}}
		for !done.Load() {
			metrics.Read(s)
			if v := s[0].Value.Uint64(); v > peak.Load() {
				peak.Store(v)
			}
			time.Sleep(200 * time.Microsecond)
		}
	}()
	f()
	peak.Store(max(peak.Load(), read()))
	done.Store(true)
	<-stopped
	return peak.Load() - min(base, peak.Load())
}

// BenchmarkElaborate100k elaborates a parsed file of 100,001 parts.
func BenchmarkElaborate100k(b *testing.B) {
	f, err := Parse("ladder.nodal", ladderSource(50000))
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Elaborate(f, nil); err != nil {
			b.Fatal(err)
		}
	}
}
