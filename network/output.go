package network

import "math"

// OutputTimes returns the output grid for a simulation ending at tEnd.
// Linear spacing gives Points equally spaced times from 0 to tEnd; log
// spacing gives 0 followed by Points logarithmically spaced times from
// First (default tEnd·1e-6) to tEnd. The last time is exactly tEnd. Zero
// fields of o take their defaults (200 points, linear).
func OutputTimes(tEnd float64, o Output) []float64 {
	pts := o.Points
	if pts <= 0 {
		pts = DefaultPoints
	}
	if pts < 2 {
		pts = 2
	}
	if o.Spacing == "log" && tEnd > 0 {
		first := o.First
		if first <= 0 || first >= tEnd {
			first = tEnd * 1e-6
		}
		ts := make([]float64, pts+1)
		lo, hi := math.Log(first), math.Log(tEnd)
		for i := 0; i < pts; i++ {
			ts[i+1] = math.Exp(lo + (hi-lo)*float64(i)/float64(pts-1))
		}
		ts[1] = first
		ts[pts] = tEnd
		return ts
	}
	ts := make([]float64, pts)
	for i := range ts {
		ts[i] = tEnd * float64(i) / float64(pts-1)
		if math.IsInf(ts[i], 0) {
			// tEnd·i overflows near the largest float64: divide first
			// (issue 17: t_end 1e308 gave output times of +Inf).
			ts[i] = tEnd * (float64(i) / float64(pts-1))
		}
	}
	ts[pts-1] = tEnd
	return ts
}
