package calibrate

import (
	"math"
	"strings"
	"testing"
)

func TestReadData(t *testing.T) {
	src := "time,P,sd_P,total\n2,1.5,0.1,\n0,0,,3\n2,1.7,0.2,2.9\n1,, ,3.1\n"
	d, err := ReadData([]byte(src), "run1.csv", []string{"P", "total", "S"})
	if err != nil {
		t.Fatal(err)
	}
	if strings.Join(d.Names, ",") != "P,total" {
		t.Errorf("names %v", d.Names)
	}
	// Sorted by time, replicates kept in file order, missing cells left out.
	want := []Point{{0, "P", 0, math.NaN(), 3}, {0, "total", 3, math.NaN(), 3}, {1, "total", 3.1, math.NaN(), 5},
		{2, "P", 1.5, 0.1, 2}, {2, "P", 1.7, 0.2, 4}, {2, "total", 2.9, math.NaN(), 4}}
	if len(d.Points) != len(want) {
		t.Fatalf("points %+v", d.Points)
	}
	for i, w := range want {
		p := d.Points[i]
		if p.Time != w.Time || p.Name != w.Name || p.Value != w.Value || p.Line != w.Line || (p.SD != w.SD && !(math.IsNaN(p.SD) && math.IsNaN(w.SD))) {
			t.Errorf("point %d = %+v, want %+v", i, p, w)
		}
	}
	if got := d.Times(); len(got) != 3 || got[2] != 2 {
		t.Errorf("times %v", got)
	}
	tsv, err := ReadData([]byte("time\tP\n0\t1\n"), "run.tsv", nil)
	if err != nil || len(tsv.Points) != 1 {
		t.Errorf("TSV: %v %+v", err, tsv)
	}
}

// TestReadDataErrors checks that each malformed file gives a message with
// its place and what is expected.
func TestReadDataErrors(t *testing.T) {
	known := []string{"P", "S"}
	for _, c := range []struct{ src, want string }{
		{"", "the file is empty"},
		{"P,S\n1,2\n", "no time column"},
		{"time,Q\n0,1\n", `line 1, column 2 (Q): is neither a species nor an assignment of the model (expected one of: P, S)`},
		{"time,P\n0,abc\n", `line 2, column 2 (P): "abc" is not a number; expected a measured value`},
		{"time,P\n-1,2\n", "line 2, column 1 (time): time -1 is before 0"},
		{"time,P,sd_P\n0,1,-0.5\n", "line 2, column 3 (sd_P): standard deviation -0.5 must be positive"},
		{"time,P,sd_P\n0,,0.5\n", "a standard deviation is given but the value of \"P\" is missing"},
		{"time,sd_P\n0,1\n", `gives standard deviations of "P", but there is no column "P"`},
		{"time,P,P\n0,1,2\n", `line 1, column 3 (P): repeats column 2`},
		{"time,P\n0,1,2\n", "line 2, column 3: the row has 3 cells but the header has 2 columns"},
		{"time,P\n,1\n", "line 2, column 1 (time): no time given"},
		{"time,P\n0,\"1\n", "line 2"},
		{"time,P\n0,NaN\n", `"NaN" is not a number`},
		{"time,P\n0,\n", "no measured values"},
	} {
		_, err := ReadData([]byte(c.src), "d.csv", known)
		if err == nil || !strings.Contains(err.Error(), c.want) || !strings.HasPrefix(err.Error(), "d.csv") && !strings.Contains(err.Error(), "d.csv") {
			t.Errorf("%q: got %v, want a message containing %q", c.src, err, c.want)
		}
	}
}

// FuzzReadData checks that no input makes ReadData panic, and that every
// accepted file gives sorted, finite points with positive or missing SDs.
func FuzzReadData(f *testing.F) {
	for _, s := range []string{"time,P,sd_P\n0,1,0.1\n1,2,0.2\n", "time\tP\n0\t1\n", "time,P\n-1,x\n", "\xef\xbb\xbftime,P\n0,\"1\"\n"} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, b []byte) {
		d, err := ReadData(b, "fuzz.csv", nil)
		if err != nil {
			return
		}
		for i, p := range d.Points {
			if math.IsNaN(p.Value) || math.IsInf(p.Value, 0) || p.Time < 0 || (i > 0 && p.Time < d.Points[i-1].Time) || p.SD <= 0 {
				t.Fatalf("bad point %+v", p)
			}
		}
	})
}
