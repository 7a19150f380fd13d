package plotting_test

import (
	"fmt"
	"math"
	"strings"

	"kinetarium/plotting"
)

// A first-order decay A → B on a log time axis. The time t = 0 cannot be
// shown on a log axis; the figure says so under its title.
func ExampleTrajectoryPlot() {
	tr := plotting.Trajectories{Names: []string{"A", "B"}}
	for _, t := range []float64{0, 0.01, 0.1, 1, 10, 100} {
		a := math.Exp(-0.5 * t)
		tr.Times = append(tr.Times, t)
		tr.Values = append(tr.Values, []float64{a, 1 - a})
	}
	p, err := plotting.TrajectoryPlot(tr, plotting.Options{
		Title:  "Decay",
		XLabel: "time", XUnit: "s",
		YLabel: "concentration", YUnit: "uM",
		LogX: true,
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(p.Title.Text)
	fmt.Println(p.X.Label.Text, "|", p.Y.Label.Text)
	var labels []string
	for _, tk := range p.X.Tick.Marker.Ticks(p.X.Min, p.X.Max) {
		if tk.Label != "" {
			labels = append(labels, tk.Label)
		}
	}
	fmt.Println(strings.Join(labels, " "))
	img := plotting.Render(p, 640, 400)
	fmt.Println(img.Bounds().Dx(), "×", img.Bounds().Dy())
	// Output:
	// Decay
	// (not shown: 1 time ≤ 0 on the log axis)
	// time (s) | concentration (uM)
	// 10^-2 10^-1 10^0 10^1 10^2
	// 640 × 400
}

// The first colours of the series palette, as hex.
func ExampleColour() {
	for slot := 0; slot < 3; slot++ {
		r, g, b, _ := plotting.Colour(slot).RGBA()
		fmt.Printf("#%02X%02X%02X %v\n", r>>8, g>>8, b>>8, plotting.Dashes(slot))
	}
	fmt.Println(plotting.Dashes(8) != nil)
	// Output:
	// #0072B2 []
	// #D55E00 []
	// #009E73 []
	// true
}
