package explore

import (
	"math"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

func TestDistributionQuantiles(t *testing.T) {
	// Reference values from SciPy 1.x (Debian python3-scipy):
	// truncnorm(a=(0−2)/1.5, b=inf, loc=2, scale=1.5).ppf(p),
	// loguniform(0.01, 100).ppf(p), lognorm(s=sqrt(ln(1+0.3²)), scale=2).ppf(p).
	cases := []struct {
		d    Distribution
		p    float64
		want float64
	}{
		{TruncNormal{Mean: 2, SD: 1.5}, 0.05, 0.3567625791139639},
		{TruncNormal{Mean: 2, SD: 1.5}, 0.5, 2.17184966233819},
		{TruncNormal{Mean: 2, SD: 1.5}, 0.95, 4.536169610121877},
		{LogUniform{Low: 0.01, High: 100}, 0.05, 0.015848931924611134},
		{LogUniform{Low: 0.01, High: 100}, 0.5, 1.0},
		{LogUniform{Low: 0.01, High: 100}, 0.95, 63.09573444801931},
		{LogNormal{Median: 2, CVPercent: 30}, 0.05, 1.2340276426578516},
		{LogNormal{Median: 2, CVPercent: 30}, 0.5, 2.0},
		{LogNormal{Median: 2, CVPercent: 30}, 0.95, 3.2414184753469457},
		{Uniform{Low: -1, High: 3}, 0.25, 0},
	}
	for _, c := range cases {
		if err := c.d.Validate(); err != nil {
			t.Fatalf("%#v: %v", c.d, err)
		}
		if got := c.d.Quantile(c.p); math.Abs(got-c.want) > 1e-12*math.Abs(c.want)+1e-15 {
			t.Errorf("%#v.Quantile(%v) = %.17g, want %.17g", c.d, c.p, got, c.want)
		}
	}
	// Zero spread gives the centre exactly.
	for _, d := range []Distribution{LogNormal{Median: 0.1, CVPercent: 0}, TruncNormal{Mean: 0.1}, Uniform{0.1, 0.1}, LogUniform{0.1, 0.1}} {
		for _, p := range []float64{1e-9, 0.3, 1 - 1e-9} {
			if got := d.Quantile(p); got != 0.1 {
				t.Errorf("%#v.Quantile(%v) = %v, want 0.1 exactly", d, p, got)
			}
		}
	}
	for _, d := range []Distribution{
		LogNormal{Median: -1, CVPercent: 10}, LogNormal{Median: 1, CVPercent: -5},
		TruncNormal{Mean: 1, SD: -1}, TruncNormal{Mean: -10, SD: 1},
		Uniform{Low: 2, High: 1}, LogUniform{Low: 0, High: 1},
	} {
		if d.Validate() == nil {
			t.Errorf("%#v: no error", d)
		}
	}
}

// ksUniform returns the one-sample Kolmogorov–Smirnov statistic of u
// against the uniform distribution on (0, 1).
func ksUniform(u []float64) float64 {
	s := slices.Clone(u)
	slices.Sort(s)
	n := float64(len(s))
	var d float64
	for i, x := range s {
		f := distuv.Uniform{Min: 0, Max: 1}.CDF(x)
		d = max(d, float64(i+1)/n-f, f-float64(i)/n)
	}
	return d
}

func TestLatinHypercube(t *testing.T) {
	const n = 500
	u := Uniform{Low: 0, High: 1}
	for _, sampling := range []Sampling{LatinHypercube, Random} {
		pts, err := Population{Vary: []Distribution{u, u, u}, Size: n, Seed: 42, Sampling: sampling}.Sample()
		if err != nil {
			t.Fatal(err)
		}
		for k := range 3 {
			col := make([]float64, n)
			strata := make([]int, n)
			for i := range pts {
				col[i] = pts[i][k]
				strata[int(col[i]*n)]++
			}
			// Smirnov's asymptotic critical value of the KS statistic at
			// α = 0.05 is 1.36/√n (from memory).
			if d := ksUniform(col); d > 1.36/math.Sqrt(n) {
				t.Errorf("%s knob %d: KS D = %.4f > %.4f", sampling, k, d, 1.36/math.Sqrt(n))
			}
			if sampling == LatinHypercube {
				for s, c := range strata {
					if c != 1 {
						t.Fatalf("knob %d: stratum %d holds %d samples, want 1", k, s, c)
					}
				}
			}
		}
	}
	// The pairing of strata differs between knobs (independent permutations).
	pts, _ := Population{Vary: []Distribution{u, u}, Size: n, Seed: 42, Sampling: LatinHypercube}.Sample()
	same := 0
	for _, p := range pts {
		if int(p[0]*n) == int(p[1]*n) {
			same++
		}
	}
	if same > 5 {
		t.Errorf("%d of %d samples share the stratum of both knobs", same, n)
	}
}

func TestPopulationReproducible(t *testing.T) {
	vary := []Distribution{LogNormal{Median: 2, CVPercent: 30}, Uniform{Low: 1, High: 2}}
	a, err := Population{Vary: vary, Size: 10, Seed: 7}.Sample()
	if err != nil {
		t.Fatal(err)
	}
	b, _ := Population{Vary: vary, Size: 20, Seed: 7}.Sample()
	c, _ := Population{Vary: vary, Size: 10, Seed: 8}.Sample()
	for i := range a {
		if !slices.Equal(a[i], b[i]) {
			t.Errorf("random sample %d changes with the size: %v vs %v", i, a[i], b[i])
		}
		if slices.Equal(a[i], c[i]) {
			t.Errorf("sample %d is the same for seeds 7 and 8", i)
		}
	}
	l1, _ := Population{Vary: vary, Size: 10, Seed: 7, Sampling: LatinHypercube}.Sample()
	l2, _ := Population{Vary: vary, Size: 10, Seed: 7, Sampling: LatinHypercube}.Sample()
	for i := range l1 {
		if !slices.Equal(l1[i], l2[i]) {
			t.Errorf("latin hypercube sample %d not reproducible", i)
		}
	}
	if _, err := (Population{Vary: vary, Size: 0}).Sample(); err == nil {
		t.Error("size 0: no error")
	}
	if _, err := (Population{Vary: vary, Size: 3, Sampling: "sobol"}).Sample(); err == nil {
		t.Error("unknown sampling: no error")
	}
}

func TestGridAndShard(t *testing.T) {
	g := Grid{Axes: [][]float64{{1, 2, 3}, {10, 20}}}
	if g.Len() != 6 {
		t.Fatalf("Len %d", g.Len())
	}
	x := make([]float64, 2)
	var got [][2]float64
	for i := range g.Len() {
		g.Point(i, x)
		got = append(got, [2]float64{x[0], x[1]})
	}
	want := [][2]float64{{1, 10}, {1, 20}, {2, 10}, {2, 20}, {3, 10}, {3, 20}}
	if !slices.Equal(got, want) {
		t.Errorf("grid order %v, want %v", got, want)
	}
	s, err := ParseShard("1/3")
	if err != nil || s != (Shard{1, 3}) || !s.Has(4) || s.Has(3) {
		t.Errorf("ParseShard(1/3) = %v, %v", s, err)
	}
	for _, bad := range []string{"3/3", "-1/2", "1", "a/b", "0/0"} {
		if _, err := ParseShard(bad); err == nil {
			t.Errorf("ParseShard(%q): no error", bad)
		}
	}
}

// Distributions so wide that draws would overflow to infinity or
// underflow to zero are refused (issue 17: a log-normal with cv_percent
// 1e300 drew exact zeros and infinities, the zeros counted as successes).
func TestDistributionTooWide(t *testing.T) {
	for _, c := range []struct {
		d    Distribution
		want string
	}{
		{LogNormal{Median: 1, CVPercent: 1e300}, "cv_percent is too wide"},
		{LogNormal{Median: 1e300, CVPercent: 1e5}, "cv_percent is too wide"},
		{Uniform{Low: -1e308, High: 1e308}, "high − low is too wide"},
		{TruncNormal{Mean: 1, SD: 1e308}, "sd is too wide"},
	} {
		err := c.d.Validate()
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%#v: %v; want %q", c.d, err, c.want)
		}
	}
	// Wide but drawable: every draw of 10,000 is finite and positive.
	d := LogNormal{Median: 1, CVPercent: 1e4}
	if err := d.Validate(); err != nil {
		t.Fatal(err)
	}
	pts, err := Population{Vary: []Distribution{d}, Size: 10000, Seed: 3}.Sample()
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range pts {
		if !(p[0] > 0) || math.IsInf(p[0], 0) {
			t.Fatalf("draw %v", p[0])
		}
	}
}

// More shards than MaxShards are refused before any work.
func TestShardCap(t *testing.T) {
	if _, err := ParseShard("0/1000000000000"); err == nil || !strings.Contains(err.Error(), "at most 100000 shards") {
		t.Errorf("ParseShard: %v", err)
	}
	if _, err := ParseShard("3/100000"); err != nil {
		t.Errorf("ParseShard at the cap: %v", err)
	}
}
