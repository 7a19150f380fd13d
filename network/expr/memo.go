package expr

// memo maps the inner nodes of a tree or DAG (Unary, Binary, Call) to
// values, by identity. It keeps one map per node type, keyed by pointer,
// which hashes much faster than a map keyed by the Node interface; the
// passes over long expressions and derivatives (Diff, Simplify, Compile)
// do one lookup per node.
type memo[V any] struct {
	un   map[*Unary]V
	bin  map[*Binary]V
	call map[*Call]V
}

func newMemo[V any]() *memo[V] {
	return &memo[V]{un: map[*Unary]V{}, bin: map[*Binary]V{}, call: map[*Call]V{}}
}

// get returns the value of n, and whether it has one. Leaves have none.
func (m *memo[V]) get(n Node) (V, bool) {
	var v V
	ok := false
	switch n := n.(type) {
	case *Binary:
		v, ok = m.bin[n]
	case *Unary:
		v, ok = m.un[n]
	case *Call:
		v, ok = m.call[n]
	}
	return v, ok
}

// set gives n the value v; leaves are ignored.
func (m *memo[V]) set(n Node, v V) {
	switch n := n.(type) {
	case *Binary:
		m.bin[n] = v
	case *Unary:
		m.un[n] = v
	case *Call:
		m.call[n] = v
	}
}

// len returns the number of nodes with a value.
func (m *memo[V]) len() int { return len(m.un) + len(m.bin) + len(m.call) }
