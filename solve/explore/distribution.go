package explore

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Distribution is the distribution of one knob in a population. Sampling
// goes through the quantile function (inverse CDF), so that Latin hypercube
// strata map onto equal-probability strata of the knob.
type Distribution interface {
	// Quantile returns the value x with P(X ≤ x) = p, for p in (0, 1).
	Quantile(p float64) float64
	// Validate reports a parameter that makes the distribution meaningless.
	Validate() error
}

// LogNormal is the log-normal distribution given by its median and its
// coefficient of variation in percent: with c = CVPercent/100,
// σ² = ln(1 + c²) and μ = ln(Median), so that the mean is Median·exp(σ²/2)
// and the standard deviation is c times the mean. A CV of zero gives
// Median exactly.
type LogNormal struct {
	Median    float64
	CVPercent float64
}

// Quantile implements Distribution.
func (d LogNormal) Quantile(p float64) float64 {
	if d.CVPercent == 0 {
		return d.Median
	}
	c := d.CVPercent / 100
	return distuv.LogNormal{Mu: math.Log(d.Median), Sigma: math.Sqrt(math.Log1p(c * c))}.Quantile(p)
}

// Validate implements Distribution.
func (d LogNormal) Validate() error {
	if !(d.Median > 0) || math.IsInf(d.Median, 0) {
		return fmt.Errorf("log-normal: median must be positive and finite, got %v", d.Median)
	}
	if !(d.CVPercent >= 0) || math.IsInf(d.CVPercent, 0) {
		return fmt.Errorf("log-normal: cv_percent must be ≥ 0 and finite, got %v", d.CVPercent)
	}
	return checkDraws("log-normal", "cv_percent", d, true)
}

// The extreme probabilities a draw can have (see unitOpen).
var (
	pLowest  = unitOpen(0)
	pHighest = unitOpen(math.MaxUint64)
)

// checkDraws refuses a distribution so wide that some draws would not be
// finite numbers (or, for a distribution of positive values, would
// underflow to zero): such draws would be silently wrong.
func checkDraws(name, key string, d Distribution, positive bool) error {
	for _, p := range []float64{pLowest, 0.5, pHighest} {
		x := d.Quantile(p)
		if math.IsNaN(x) || math.IsInf(x, 0) || (positive && !(x > 0)) {
			return fmt.Errorf("%s: %s is too wide for numbers this program can draw (a draw at probability %.3g would be %v); expected a narrower distribution", name, key, p, x)
		}
	}
	return nil
}

// TruncNormal is the normal distribution with mean Mean and standard
// deviation SD (of the untruncated normal) conditioned on being positive:
// values ≤ 0 are excluded. Sampling inverts the truncated CDF exactly, which
// is equivalent to rejecting non-positive draws but keeps Latin hypercube
// stratification. An SD of zero gives Mean exactly.
type TruncNormal struct {
	Mean float64
	SD   float64
}

// Quantile implements Distribution.
func (d TruncNormal) Quantile(p float64) float64 {
	if d.SD == 0 {
		return d.Mean
	}
	n := distuv.Normal{Mu: d.Mean, Sigma: d.SD}
	// Work with the upper tail for accuracy when zero lies far below the
	// mean: P(X > x | X > 0) = 1 − p.
	s0 := n.Survival(0)
	x := n.Quantile(1 - (1-p)*s0)
	if x <= 0 { // rounding at p → 0
		x = math.SmallestNonzeroFloat64
	}
	return x
}

// Validate implements Distribution.
func (d TruncNormal) Validate() error {
	if math.IsNaN(d.Mean) || math.IsInf(d.Mean, 0) {
		return fmt.Errorf("truncated normal: mean must be finite, got %v", d.Mean)
	}
	if !(d.SD >= 0) || math.IsInf(d.SD, 0) {
		return fmt.Errorf("truncated normal: sd must be ≥ 0 and finite, got %v", d.SD)
	}
	if d.SD == 0 && d.Mean <= 0 {
		return fmt.Errorf("truncated normal: with sd 0 the mean must be positive, got %v", d.Mean)
	}
	if d.SD > 0 && d.Mean < -6*d.SD {
		return fmt.Errorf("truncated normal: mean %v lies more than 6 sd below zero; almost no mass is left", d.Mean)
	}
	if err := checkDraws("truncated normal", "sd", d, true); err != nil {
		return err
	}
	return nil
}

// Uniform is the uniform distribution on [Low, High]. Low == High gives
// Low exactly.
type Uniform struct {
	Low, High float64
}

// Quantile implements Distribution.
func (d Uniform) Quantile(p float64) float64 {
	if d.Low == d.High {
		return d.Low
	}
	return d.Low + p*(d.High-d.Low)
}

// Validate implements Distribution.
func (d Uniform) Validate() error {
	if math.IsNaN(d.Low) || math.IsNaN(d.High) || math.IsInf(d.Low, 0) || math.IsInf(d.High, 0) || d.Low > d.High {
		return fmt.Errorf("uniform: need finite low ≤ high, got [%v, %v]", d.Low, d.High)
	}
	return checkDraws("uniform", "high − low", d, false)
}

// LogUniform is the distribution whose logarithm is uniform on
// [ln Low, ln High], for 0 < Low ≤ High. Low == High gives Low exactly.
type LogUniform struct {
	Low, High float64
}

// Quantile implements Distribution.
func (d LogUniform) Quantile(p float64) float64 {
	if d.Low == d.High {
		return d.Low
	}
	a, b := math.Log(d.Low), math.Log(d.High)
	return math.Exp(a + p*(b-a))
}

// Validate implements Distribution.
func (d LogUniform) Validate() error {
	if !(d.Low > 0) || math.IsInf(d.High, 0) || !(d.Low <= d.High) {
		return fmt.Errorf("log-uniform: need 0 < low ≤ high, finite, got [%v, %v]", d.Low, d.High)
	}
	return nil
}
