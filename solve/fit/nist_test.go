package fit

import (
	"bufio"
	"context"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// NISTSet is a NIST StRD nonlinear-regression data set read from its .dat
// file (testdata/nist, copied with NIST's headers; see SOURCE.md there).
type NISTSet struct {
	Start1, Start2, Cert, CertSD []float64
	RSS                          float64
	X, Y                         []float64
}

// ReadNIST reads a NIST StRD .dat file.
func ReadNIST(t testing.TB, path string) NISTSet {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var s NISTSet
	sc := bufio.NewScanner(f)
	inData := false
	for sc.Scan() {
		line := strings.TrimSpace(sc.Text())
		fs := strings.Fields(line)
		switch {
		case strings.HasPrefix(line, "Data:") && strings.Contains(line, "y") && strings.Contains(line, "x") && !strings.Contains(line, "Response"):
			inData = true
		case inData && len(fs) == 2:
			y, _ := strconv.ParseFloat(fs[0], 64)
			x, _ := strconv.ParseFloat(fs[1], 64)
			s.X, s.Y = append(s.X, x), append(s.Y, y)
		case len(fs) == 6 && strings.HasPrefix(fs[0], "b") && fs[1] == "=":
			v := make([]float64, 4)
			for i := range v {
				v[i], _ = strconv.ParseFloat(fs[2+i], 64)
			}
			s.Start1, s.Start2 = append(s.Start1, v[0]), append(s.Start2, v[1])
			s.Cert, s.CertSD = append(s.Cert, v[2]), append(s.CertSD, v[3])
		case strings.HasPrefix(line, "Residual Sum of Squares:"):
			s.RSS, _ = strconv.ParseFloat(fs[len(fs)-1], 64)
		}
	}
	if len(s.X) == 0 || len(s.Cert) == 0 {
		t.Fatalf("%s: no data or certified values read", path)
	}
	return s
}

// LRE is NIST's log relative error −log10(|x − c|/|c|), capped at 15.
func LRE(x, c float64) float64 {
	if x == c {
		return 15
	}
	return math.Min(15, -math.Log10(math.Abs(x-c)/math.Abs(c)))
}

// closedForm returns the residual function y − model(x; b) with its
// exact Jacobian for the NIST models.
func closedForm(set NISTSet, model func(x float64, b, grad []float64) float64) Func {
	return func(_ context.Context, b, r []float64, jac *mat.Dense) error {
		grad := make([]float64, len(b))
		for i, x := range set.X {
			r[i] = model(x, b, grad) - set.Y[i]
			if jac != nil {
				for j, g := range grad {
					jac.Set(i, j, g)
				}
			}
		}
		return nil
	}
}

func misra1a(x float64, b, g []float64) float64 {
	e := math.Exp(-b[1] * x)
	g[0], g[1] = 1-e, b[0]*x*e
	return b[0] * (1 - e)
}

func lanczos(x float64, b, g []float64) float64 {
	var y float64
	for k := 0; k < 3; k++ {
		e := math.Exp(-b[2*k+1] * x)
		g[2*k], g[2*k+1] = e, -b[2*k]*x*e
		y += b[2*k] * e
	}
	return y
}

// TestNISTClosedForm checks the minimizer alone on NIST StRD Misra1a and
// Lanczos1–3 with the models in closed form, from both of NIST's
// starting points: certified parameters and residual sum of squares to a
// log relative error ≥ 6 (NIST's guidance for double precision, see
// testdata/nist/SOURCE.md; Lanczos1's RSS of 1.4e-25 excepted), and
// standard errors (σ² = RSS/(n − p)) to ≥ 3.
func TestNISTClosedForm(t *testing.T) {
	for _, c := range []struct {
		file  string
		model func(x float64, b, g []float64) float64
	}{{"Misra1a", misra1a}, {"Lanczos1", lanczos}, {"Lanczos2", lanczos}, {"Lanczos3", lanczos}} {
		set := ReadNIST(t, "testdata/nist/"+c.file+".dat")
		for si, start := range [][]float64{set.Start1, set.Start2} {
			res, err := Minimize(context.Background(), closedForm(set, c.model), len(set.X), start, Settings{})
			if err != nil {
				t.Fatalf("%s start %d: %v", c.file, si+1, err)
			}
			rss := 2 * res.Cost
			n, p := len(set.X), len(start)
			u := Fisher(res.J, rss/float64(n-p), nil)
			for j := range start {
				if l := LRE(res.X[j], set.Cert[j]); l < 6 {
					t.Errorf("%s start %d: b%d = %.12g, certified %.12g (LRE %.1f < 6)", c.file, si+1, j+1, res.X[j], set.Cert[j], l)
				}
				if l := LRE(u.SE[j], set.CertSD[j]); l < 3 {
					t.Errorf("%s start %d: SE(b%d) = %.6g, certified %.6g (LRE %.1f < 3)", c.file, si+1, j+1, u.SE[j], set.CertSD[j], l)
				}
			}
			if l := LRE(rss, set.RSS); l < 6 && c.file != "Lanczos1" {
				t.Errorf("%s start %d: RSS %.12g, certified %.12g (LRE %.1f < 6)", c.file, si+1, rss, set.RSS, l)
			}
			t.Logf("%s start %d: %d iterations, %s", c.file, si+1, res.Iterations, res.Reason)
		}
	}
}
