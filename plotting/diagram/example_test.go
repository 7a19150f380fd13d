package diagram_test

import (
	"fmt"

	"kinetarium/plotting/diagram"
)

// A substrate turned into a product by an enzyme: laid out in rows, then
// drawn with Plot (and saved with plotting.Save).
func Example() {
	d := &diagram.Diagram{
		Nodes: []diagram.Node{
			{Kind: diagram.Species, Name: "S", Present: true},
			{Kind: diagram.Species, Name: "E", Present: true},
			{Kind: diagram.Reaction, Name: "convert"},
			{Kind: diagram.Species, Name: "P"},
		},
		Edges: []diagram.Edge{
			{From: 0, To: 2, Role: diagram.Consumes},
			{From: 1, To: 2, Role: diagram.Catalyses},
			{From: 2, To: 3, Role: diagram.Produces},
		},
	}
	st := diagram.Layout(d, diagram.Settings{})
	fmt.Println(st.Method, st.Crossings)
	for _, n := range d.Nodes {
		fmt.Printf("%s above P: %v\n", n.Name, n.Y < d.Nodes[3].Y)
	}
	_ = diagram.Plot(d, diagram.Options{Style: diagram.SBGN, Title: "an enzyme"})
	// Output:
	// layered 0
	// S above P: true
	// E above P: true
	// convert above P: true
	// P above P: false
}
