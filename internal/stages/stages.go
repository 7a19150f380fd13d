// Package stages times the stages of a run (reading, checking, compiling,
// solving, writing) and records how much each allocates and the peak
// memory of the process after it: the numbers behind the batch command's
// --timings and the large-network report (bench/large-networks.md).
package stages

import (
	"fmt"
	"io"
	"runtime"
	"text/tabwriter"
	"time"
)

// Stage is what one stage of a run took.
type Stage struct {
	Name    string  `json:"name"`
	Seconds float64 `json:"seconds"` // wall time
	// CPU is the processor time of the process during the stage, user
	// and system, in seconds (0 where the system does not report it); on
	// a busy machine it varies less than the wall time.
	CPU float64 `json:"cpu_seconds"`
	// Alloc is the number of bytes the stage allocated on the heap (all
	// goroutines of the process while it ran).
	Alloc uint64 `json:"alloc_bytes"`
	// Peak is the process's peak resident memory in bytes at the end of
	// the stage (the operating system's high-water mark, so it never
	// falls; 0 where the system does not report it).
	Peak int64 `json:"peak_bytes"`
}

// Recorder collects the stages of one run. Its zero value is ready to use.
type Recorder struct {
	Stages []Stage
}

// Do runs f as the stage name and records it, also when f fails. It
// returns f's error.
func (r *Recorder) Do(name string, f func() error) error {
	var before runtime.MemStats
	runtime.ReadMemStats(&before)
	cpu0 := CPUTime()
	start := time.Now()
	err := f()
	wall := time.Since(start)
	cpu := CPUTime() - cpu0
	var after runtime.MemStats
	runtime.ReadMemStats(&after)
	r.Stages = append(r.Stages, Stage{Name: name, Seconds: wall.Seconds(), CPU: cpu,
		Alloc: after.TotalAlloc - before.TotalAlloc, Peak: PeakRSS()})
	return err
}

// Write prints the stages as a table with a total line: wall time in
// milliseconds, allocation and peak memory in MB.
func (r *Recorder) Write(w io.Writer) error {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "stage\ttime (ms)\tCPU (ms)\tallocated (MB)\tpeak memory (MB)\t\n")
	var total, cpu float64
	var alloc uint64
	var peak int64
	for _, s := range r.Stages {
		fmt.Fprintf(tw, "%s\t%.1f\t%.1f\t%.1f\t%s\t\n", s.Name, s.Seconds*1e3, s.CPU*1e3, MB(int64(s.Alloc)), peakText(s.Peak))
		total += s.Seconds
		cpu += s.CPU
		alloc += s.Alloc
		peak = max(peak, s.Peak)
	}
	fmt.Fprintf(tw, "total\t%.1f\t%.1f\t%.1f\t%s\t\n", total*1e3, cpu*1e3, MB(int64(alloc)), peakText(peak))
	return tw.Flush()
}

// MB converts bytes to megabytes (10⁶ bytes).
func MB(b int64) float64 { return float64(b) / 1e6 }

func peakText(b int64) string {
	if b <= 0 {
		return "n/a"
	}
	return fmt.Sprintf("%.1f", MB(b))
}
