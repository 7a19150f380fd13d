//go:build xvfb

package main

import (
	"fmt"
	"image"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"
)

// TestScreenshot opens the real window under xvfb-run with the default
// example, lets it simulate and plot, and checks the saved picture is a
// real one: at least 800×500 pixels, more than 50 distinct colours, and not
// one colour. Run with: go test -tags xvfb -run TestScreenshot ./app
func TestScreenshot(t *testing.T) {
	if _, err := exec.LookPath("xvfb-run"); err != nil {
		t.Skip("xvfb-run is not installed")
	}
	dir := t.TempDir()
	bin := filepath.Join(dir, "kinetarium")
	if out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("build: %v\n%s", err, out)
	}
	shot := os.Getenv("SHOT")
	if shot == "" {
		shot = filepath.Join(dir, "shot.png")
	}
	args := []string{"-a", "-s", "-screen 0 1400x900x24", bin, "--screenshot", shot}
	if m := os.Getenv("MODEL"); m != "" {
		args = append(args, "--model", m)
	}
	cmd := exec.Command("xvfb-run", args...)
	cmd.Env = append(os.Environ(), "LANG=en_US.UTF-8")
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("screenshot run: %v\n%s", err, out)
	}
	f, err := os.Open(shot)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatalf("screenshot is not a PNG: %v", err)
	}
	checkPicture(t, img)
}

func checkPicture(t *testing.T, img image.Image) {
	b := img.Bounds()
	if b.Dx() < 800 || b.Dy() < 500 {
		t.Errorf("screenshot is %d×%d, want at least 800×500", b.Dx(), b.Dy())
	}
	colours := map[[4]uint32]int{}
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bl, a := img.At(x, y).RGBA()
			colours[[4]uint32{r, g, bl, a}]++
		}
	}
	if len(colours) <= 50 {
		t.Errorf("screenshot has %d distinct colours, want more than 50", len(colours))
	}
	most := 0
	for _, n := range colours {
		most = max(most, n)
	}
	if most > b.Dx()*b.Dy()*95/100 {
		t.Errorf("one colour covers %d of %d pixels: the picture is nearly blank", most, b.Dx()*b.Dy())
	}
}

// TestScreenshotDiagram opens the window with --view diagram on the
// two-compartment example, lets it simulate (the diagram then shows the
// replay of the run's end), and checks that the region the program says
// the diagram occupies holds a picture: more than 20 distinct colours and
// no colour covering 95 % of it. Keep the picture with SHOT_DIAGRAM=path.
func TestScreenshotDiagram(t *testing.T) {
	if _, err := exec.LookPath("xvfb-run"); err != nil {
		t.Skip("xvfb-run is not installed")
	}
	dir := t.TempDir()
	bin := filepath.Join(dir, "kinetarium")
	if out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("build: %v\n%s", err, out)
	}
	shot := os.Getenv("SHOT_DIAGRAM")
	if shot == "" {
		shot = filepath.Join(dir, "diagram.png")
	}
	model, _ := filepath.Abs("../examples/two-compartment-drug.json")
	cmd := exec.Command("xvfb-run", "-a", "-s", "-screen 0 1400x900x24", bin, "--screenshot", shot, "--view", "diagram", "--model", model)
	cmd.Env = append(os.Environ(), "LANG=en_US.UTF-8")
	out, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("screenshot run: %v\n%s", err, out)
	}
	var r image.Rectangle
	found := false
	for _, line := range strings.Split(string(out), "\n") {
		if _, err := fmt.Sscanf(line, "app: diagram region %d %d %d %d", &r.Min.X, &r.Min.Y, &r.Max.X, &r.Max.Y); err == nil {
			found = true
		}
	}
	if !found {
		t.Fatalf("the program did not say where the diagram is:\n%s", out)
	}
	f, err := os.Open(shot)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatalf("screenshot is not a PNG: %v", err)
	}
	checkPicture(t, img)
	if !r.In(img.Bounds()) || r.Dx() < 200 || r.Dy() < 150 {
		t.Fatalf("diagram region %v in a %v picture", r, img.Bounds())
	}
	colours := map[[4]uint32]int{}
	for y := r.Min.Y; y < r.Max.Y; y++ {
		for x := r.Min.X; x < r.Max.X; x++ {
			cr, cg, cb, ca := img.At(x, y).RGBA()
			colours[[4]uint32{cr, cg, cb, ca}]++
		}
	}
	most := 0
	for _, n := range colours {
		most = max(most, n)
	}
	if len(colours) <= 20 || most > r.Dx()*r.Dy()*95/100 {
		t.Errorf("the diagram region %v has %d colours, the commonest covering %d of %d pixels: it looks blank", r, len(colours), most, r.Dx()*r.Dy())
	}
}

// The program built once for the screenshot tests below.
var (
	buildOnce sync.Once
	builtBin  string
	buildErr  error
)

// TestMain removes the program built for the screenshot tests.
func TestMain(m *testing.M) {
	code := m.Run()
	if builtBin != "" {
		os.RemoveAll(filepath.Dir(builtBin))
	}
	os.Exit(code)
}

// shotOf runs the program under xvfb-run with args and --screenshot, and
// returns the decoded picture; keep it with the environment variable env.
func shotOf(t *testing.T, env string, args ...string) image.Image {
	t.Helper()
	if _, err := exec.LookPath("xvfb-run"); err != nil {
		t.Skip("xvfb-run is not installed")
	}
	dir := t.TempDir()
	buildOnce.Do(func() {
		bin, err := os.MkdirTemp("", "kinetarium-shots")
		if err != nil {
			buildErr = err
			return
		}
		builtBin = filepath.Join(bin, "kinetarium")
		if out, err := exec.Command("go", "build", "-o", builtBin, ".").CombinedOutput(); err != nil {
			buildErr = fmt.Errorf("%v\n%s", err, out)
		}
	})
	if buildErr != nil {
		t.Fatalf("build: %v", buildErr)
	}
	bin := builtBin
	shot := os.Getenv(env)
	if shot == "" {
		shot = filepath.Join(dir, "shot.png")
	}
	cmd := exec.Command("xvfb-run", append([]string{"-a", "-s", "-screen 0 1400x900x24", bin, "--screenshot", shot}, args...)...)
	cmd.Env = append(os.Environ(), "LANG=en_US.UTF-8")
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("screenshot run: %v\n%s", err, out)
	}
	f, err := os.Open(shot)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatalf("screenshot is not a PNG: %v", err)
	}
	checkPicture(t, img)
	return img
}

// TestScreenshotMeasurements shows measurements over the protease
// example's curves (--data) and leaves no companion file behind, as a
// picture for checks should; keep the picture with SHOT_DATA=path.
func TestScreenshotMeasurements(t *testing.T) {
	dir := t.TempDir()
	for _, f := range []string{"../examples/protease-inhibitor.json", "../examples/fits/no-inhibitor.csv"} {
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		os.WriteFile(filepath.Join(dir, filepath.Base(f)), b, 0o644)
	}
	shotOf(t, "SHOT_DATA", "--model", filepath.Join(dir, "protease-inhibitor.json"), "--data", filepath.Join(dir, "no-inhibitor.csv"))
	if _, err := os.Stat(filepath.Join(dir, "protease-inhibitor.beside.json")); err == nil {
		t.Error("the screenshot run wrote a companion file")
	}
}

// TestScreenshotFit runs the example fit plan in the fit window (--view
// fit) and captures that window; keep the picture with SHOT_FIT=path.
func TestScreenshotFit(t *testing.T) {
	model, _ := filepath.Abs("../examples/protease-inhibitor.json")
	plan, _ := filepath.Abs("../examples/fits/protease-fit.json")
	shotOf(t, "SHOT_FIT", "--model", model, "--view", "fit", "--plan", plan)
}

// TestScreenshotSensitivity captures the Sensitivity over time window
// (--view sensitivity); keep the picture with SHOT_SENS=path.
func TestScreenshotSensitivity(t *testing.T) {
	model, _ := filepath.Abs("../examples/protease-inhibitor.json")
	shotOf(t, "SHOT_SENS", "--model", model, "--view", "sensitivity")
}
