package expr

import (
	"fmt"
	"math"
	"slices"
	"sync"
)

type opcode uint8

// The machine keeps the top of the stack in a local variable x; "push" saves
// x on the stack before loading a new value (the first load saves a
// meaningless x, which keeps loads branch-free), and binary operators combine
// the saved value s with x. Suffix V takes the right operand from a variable
// slot, C from the constant; R marks reversed operands.
const (
	opConst opcode = iota // push; x = c
	opVar                 // push; x = vars[i]
	opAdd                 // x = s + x
	opSub                 // x = s - x
	opMul                 // x = s * x
	opDiv                 // x = s / x
	opPow                 // x = s ^ x
	opAddV                // x += vars[i]
	opSubV                // x -= vars[i]
	opRSubV               // x = vars[i] - x
	opMulV                // x *= vars[i]
	opDivV                // x /= vars[i]
	opRDivV               // x = vars[i] / x
	opPowV                // x = x ^ vars[i]
	opRPowV               // x = vars[i] ^ x
	opAddC                // x += c
	opRSubC               // x = c - x
	opMulC                // x *= c
	opDivC                // x /= c
	opRDivC               // x = c / x
	opPowC                // x = x ^ c
	opRPowC               // x = c ^ x
	opNeg                 // x = -x
	opSq                  // x = x*x
	opCube                // x = x*x*x
	opRecip               // x = 1/x
	opPowI                // x = x^int32(i), by repeated squaring
	opSqrt
	opExp
	opLog
	opLog10
	opAbs
	opSign
	opMin  // x = min(s, x)
	opMax  // x = max(s, x)
	opIfLE // with saved a, b, p: x = p if a <= b else x
	opFn1  // x = f(x) for the function fnID(i) (see apply1)

	// Loads of a whole operation on two leaves: push, then x = ...
	opAddVV // vars[i] + vars[j]
	opSubVV // vars[i] - vars[j]
	opMulVV // vars[i] * vars[j]
	opDivVV // vars[i] / vars[j]
	opAddCV // c + vars[i]
	opSubCV // c - vars[i]
	opMulCV // c * vars[i]
	opDivCV // c / vars[i]
	opDivVC // vars[i] / c

	// Products of leaves fused with the operation that uses them; see
	// product for the shapes. A = vars[i], B = vars[j], C = vars[k].
	opMulVVV    // push; x = A*B*C
	opMulCVV    // push; x = c*A*B
	opAddMulVV  // x += A*B
	opSubMulVV  // x -= A*B
	opAddMulVVV // x += A*B*C
	opSubMulVVV // x -= A*B*C
	opAddMulCV  // x += c*A
	opSubMulCV  // x -= c*A
	opAddMulCVV // x += c*A*B
	opSubMulCVV // x -= c*A*B
	opAddMulVSq // x += A*(B*B)
	opSubMulVSq // x -= A*(B*B)
	opRDivMulVV // x = A*B/x
	opRDivMulCV // x = c*A/x
	opMM        // push; x = A*B/(C + vars[l]), the Michaelis–Menten form
	opMMC       // push; x = A*B/(c + C)

	// Two signed product terms added in turn: x = (x + t1) + t2, where
	// t1 is a term of the kind named first, over c and vars i, j, k, and
	// t2 one of the kind named second, over d and vars l, m, n. A term
	// carries its sign in its constant (see term); the kinds are
	// 1: c*A, 2: (c*A)*B, 3: ((c*A)*B)*C and Q: (c*A)*(B*B). The conversions
	// to float64 in Eval keep the terms rounded, never fused into the sums.
	opAdd2T11
	opAdd2T12
	opAdd2T13
	opAdd2T1Q
	opAdd2T21
	opAdd2T22
	opAdd2T23
	opAdd2T2Q
	opAdd2T31
	opAdd2T32
	opAdd2T33
	opAdd2T3Q
	opAdd2TQ1
	opAdd2TQ2
	opAdd2TQ3
	opAdd2TQQ

	// Shared subexpressions (of derivatives): computed once, kept in a
	// temporary and loaded again where they recur.
	opStoreT // temps[i] = x
	opLoadT  // push; x = temps[i]
)

type instr struct {
	op               opcode
	i, j, k, l, m, n uint32
	c, d             float64
}

// Program is a compiled expression. Its Eval method uses scratch space held
// in the Program, so a Program is not safe for concurrent use; give each
// goroutine its own Clone.
type Program struct {
	code  []instr
	stack []float64
	temps []float64 // values of shared subexpressions
	slots int       // len(vars) must be at least this
}

// Compile simplifies n and compiles it into a Program. The function slot maps
// each variable name to its index in the vars slice later passed to Eval;
// Compile reports an error naming the first variable slot does not know.
// Integer powers x^2, x^3, x^-1, ... become multiplications and x^0.5
// becomes sqrt(x).
//
// A tree with a problem that makes it meaningless (a missing node, an
// unknown operator or function, a wrong number of arguments; see Check) is
// an error naming the first problem and its column.
func Compile(n Node, slot func(name string) (int, bool)) (*Program, error) {
	if !wellFormed(n) {
		return nil, fmt.Errorf("compile: %w", check(n, false)[0])
	}
	// The code is written into a reused buffer and copied out at its
	// length: a model compiles thousands of short programs (a rate and
	// its derivatives for each reaction), which would otherwise each
	// grow their code by copies and keep the spare capacity.
	buf := codeBuffers.Get().(*[]instr)
	defer func() {
		*buf = (*buf)[:0]
		codeBuffers.Put(buf)
	}()
	c := &compiler{slot: slot, refs: newMemo[int](), temps: newMemo[uint32](), code: (*buf)[:0]}
	n = simplify(n)
	countRefs(n, c.refs)
	err := c.emit(n)
	*buf = c.code // keep the grown buffer for the next program
	if err != nil {
		return nil, err
	}
	return &Program{code: slices.Clone(c.code), stack: make([]float64, c.maxDepth), temps: make([]float64, c.temps.len()), slots: c.slots}, nil
}

// codeBuffers holds the buffers Compile writes code into (*[]instr).
var codeBuffers = sync.Pool{New: func() any { return new([]instr) }}

// Clone returns a copy of p with its own scratch space, for use by another
// goroutine.
func (p *Program) Clone() *Program {
	return &Program{code: p.code, stack: make([]float64, len(p.stack)), temps: make([]float64, len(p.temps)), slots: p.slots}
}

// Slots returns the length the vars slice passed to Eval must have at least:
// one more than the largest slot used.
func (p *Program) Slots() int { return p.slots }

type compiler struct {
	slot     func(string) (int, bool)
	code     []instr
	depth    int // number of values saved on the stack below x
	maxDepth int
	slots    int
	refs     *memo[int]    // how often each inner node is used (more than once in a DAG)
	temps    *memo[uint32] // the temporary of each shared node computed so far
}

// countRefs counts the uses of each inner node of n, visiting the children
// of a shared node once.
func countRefs(n Node, refs *memo[int]) {
	switch n.(type) {
	case *Unary, *Binary, *Call:
	default:
		return
	}
	k, _ := refs.get(n)
	refs.set(n, k+1)
	if k > 0 {
		return
	}
	switch n := n.(type) {
	case *Unary:
		countRefs(n.X, refs)
	case *Binary:
		countRefs(n.L, refs)
		countRefs(n.R, refs)
	case *Call:
		for _, a := range n.Args {
			countRefs(a, refs)
		}
	}
}

func (c *compiler) add(op opcode, i uint32, v float64) {
	c.code = append(c.code, instr{op: op, i: i, c: v})
}

// emitLeaves emits l op r as a single load when both are leaves and such an
// instruction exists, reporting whether it did.
func (c *compiler) emitLeaves(op Op, l, r Node) (bool, error) {
	lv, lVar := l.(*Variable)
	rv, rVar := r.(*Variable)
	ln, lNum := l.(*Number)
	rn, rNum := r.(*Number)
	var code instr
	switch {
	case lVar && rVar:
		vv := map[Op]opcode{OpAdd: opAddVV, OpSub: opSubVV, OpMul: opMulVV, OpDiv: opDivVV}
		o, ok := vv[op]
		if !ok {
			return false, nil
		}
		code.op = o
	case lNum && rVar:
		cv := map[Op]opcode{OpAdd: opAddCV, OpSub: opSubCV, OpMul: opMulCV, OpDiv: opDivCV}
		o, ok := cv[op]
		if !ok {
			return false, nil
		}
		code = instr{op: o, c: ln.Value}
		lv, rv = rv, nil
	case lVar && rNum:
		switch op {
		case OpAdd:
			code = instr{op: opAddCV, c: rn.Value}
		case OpSub:
			code = instr{op: opAddCV, c: -rn.Value} // v - c == -c + v exactly
		case OpMul:
			code = instr{op: opMulCV, c: rn.Value}
		case OpDiv:
			code = instr{op: opDivVC, c: rn.Value}
		default:
			return false, nil
		}
	default:
		return false, nil
	}
	i, err := c.varSlot(lv)
	if err != nil {
		return false, err
	}
	code.i = i
	if rv != nil {
		if code.j, err = c.varSlot(rv); err != nil {
			return false, err
		}
	}
	c.push()
	c.code = append(c.code, code)
	return true, nil
}

func (c *compiler) push() {
	c.depth++
	c.maxDepth = max(c.maxDepth, c.depth)
}

func (c *compiler) pop(k int) { c.depth -= k }

func (c *compiler) varSlot(v *Variable) (uint32, error) {
	i, ok := c.slot(v.Name)
	if !ok {
		return 0, fmt.Errorf("compile: unknown variable %q at column %d", v.Name, v.Col)
	}
	if i < 0 || i > math.MaxInt32-1 {
		return 0, fmt.Errorf("compile: variable %q mapped to invalid slot %d; expected a non-negative index", v.Name, i)
	}
	c.slots = max(c.slots, i+1)
	return uint32(i), nil
}

// Operator codes indexed by (operator, operand kind).
var (
	stackOps = map[Op]opcode{OpAdd: opAdd, OpSub: opSub, OpMul: opMul, OpDiv: opDiv, OpPow: opPow}
	varOps   = map[Op]opcode{OpAdd: opAddV, OpSub: opSubV, OpMul: opMulV, OpDiv: opDivV, OpPow: opPowV}
	rvarOps  = map[Op]opcode{OpAdd: opAddV, OpSub: opRSubV, OpMul: opMulV, OpDiv: opRDivV, OpPow: opRPowV}
	constOps = map[Op]opcode{OpAdd: opAddC, OpMul: opMulC, OpDiv: opDivC, OpPow: opPowC}
	rconOps  = map[Op]opcode{OpAdd: opAddC, OpSub: opRSubC, OpMul: opMulC, OpDiv: opRDivC, OpPow: opRPowC}
	callOps  = [numFuncs]opcode{fnExp: opExp, fnLog: opLog, fnLog10: opLog10, fnSqrt: opSqrt,
		fnAbs: opAbs, fnMin: opMin, fnMax: opMax, fnPow: opPow, fnSign: opSign, fnIfLE: opIfLE}
)

// emit emits n. A node used more than once (a shared part of a
// derivative) is computed where it first occurs, kept in a temporary, and
// loaded from there where it recurs. Evaluation follows the order of
// emission and every operand is evaluated (ifle, min and max included), so
// the first occurrence is always computed before the others.
func (c *compiler) emit(n Node) error {
	if k, _ := c.refs.get(n); k > 1 {
		if t, ok := c.temps.get(n); ok {
			c.push()
			c.add(opLoadT, t, 0)
			return nil
		}
		if err := c.emitNode(n); err != nil {
			return err
		}
		t := uint32(c.temps.len())
		c.temps.set(n, t)
		c.add(opStoreT, t, 0)
		return nil
	}
	return c.emitNode(n)
}

func (c *compiler) emitNode(n Node) error {
	switch n := n.(type) {
	case *Number:
		c.push()
		c.add(opConst, 0, n.Value)
	case *Variable:
		i, err := c.varSlot(n)
		if err != nil {
			return err
		}
		c.push()
		c.add(opVar, i, 0)
	case *Unary:
		if err := c.emit(n.X); err != nil {
			return err
		}
		c.add(opNeg, 0, 0)
	case *Binary:
		pr, err := c.product(n)
		if err != nil {
			return err
		}
		if op := pushProduct[pr.shape]; op != 0 {
			c.push()
			c.addProduct(op, pr)
			return nil
		}
		return c.emitBin(n)
	case *Call:
		id, _ := funcByName(n.Func) // known, with the right arity: n is well formed
		for _, a := range n.Args {
			if err := c.emit(a); err != nil {
				return err
			}
		}
		if op := callOps[id]; op != 0 {
			c.add(op, 0, 0)
		} else {
			c.add(opFn1, uint32(id), 0)
		}
		c.pop(len(n.Args) - 1)
	default:
		return fmt.Errorf("compile: unsupported node %T", n)
	}
	return nil
}

func (c *compiler) emitBin(n *Binary) error {
	if n.Op == OpPow {
		if v, ok := numOf(n.R); ok && c.emitPowConst(n.L, v) {
			return nil
		}
	}
	if ok, err := c.emitMM(n); ok || err != nil {
		return err
	}
	if ok, err := c.emitLeaves(n.Op, n.L, n.R); ok || err != nil {
		return err
	}
	// Right operand a leaf: compute the left, then apply an operand form.
	switch r := n.R.(type) {
	case *Variable:
		if err := c.emit(n.L); err != nil {
			return err
		}
		i, err := c.varSlot(r)
		if err != nil {
			return err
		}
		c.add(varOps[n.Op], i, 0)
		return nil
	case *Number:
		if err := c.emit(n.L); err != nil {
			return err
		}
		switch n.Op {
		case OpSub:
			c.add(opAddC, 0, -r.Value) // x - c == x + (-c) exactly in IEEE arithmetic
		default:
			c.add(constOps[n.Op], 0, r.Value)
		}
		return nil
	}
	// Left operand a leaf: compute the right, then apply a reversed form.
	switch l := n.L.(type) {
	case *Variable:
		i, err := c.varSlot(l)
		if err != nil {
			return err
		}
		if err := c.emit(n.R); err != nil {
			return err
		}
		c.add(rvarOps[n.Op], i, 0)
		return nil
	case *Number:
		if err := c.emit(n.R); err != nil {
			return err
		}
		c.add(rconOps[n.Op], 0, l.Value)
		return nil
	}
	if ok, err := c.emitTwoTerms(n); ok || err != nil {
		return err
	}
	// An operand a product of leaves: compute the other side, then apply
	// the operation with the product.
	if ops, ok := productOps[n.Op]; ok {
		done, err := c.emitWithProduct(n.L, n.R, ops)
		if done || err != nil {
			return err
		}
	}
	if ops, ok := rproductOps[n.Op]; ok {
		done, err := c.emitWithProduct(n.R, n.L, ops)
		if done || err != nil {
			return err
		}
	}
	if err := c.emit(n.L); err != nil {
		return err
	}
	if err := c.emit(n.R); err != nil {
		return err
	}
	c.add(stackOps[n.Op], 0, 0)
	c.pop(1)
	return nil
}

// emitMM emits n as one instruction when it has the form A*B/(C + D) of the
// Michaelis–Menten law, with A, B and at least one of C and D variables,
// reporting whether it did.
func (c *compiler) emitMM(n *Binary) (bool, error) {
	sum, ok := n.R.(*Binary)
	if n.Op != OpDiv || !ok || sum.Op != OpAdd {
		return false, nil
	}
	pr, err := c.product(n.L)
	if err != nil || pr.shape != prodVV {
		return false, err
	}
	in := instr{op: opMM, i: pr.i, j: pr.j}
	lv, lVar := sum.L.(*Variable)
	rv, rVar := sum.R.(*Variable)
	ln, lNum := sum.L.(*Number)
	rn, rNum := sum.R.(*Number)
	switch {
	case lVar && rVar:
		if in.k, err = c.varSlot(lv); err != nil {
			return false, err
		}
		if in.l, err = c.varSlot(rv); err != nil {
			return false, err
		}
	case lNum && rVar:
		in.op, in.c = opMMC, ln.Value
		if in.k, err = c.varSlot(rv); err != nil {
			return false, err
		}
	case lVar && rNum: // C + c == c + C exactly
		in.op, in.c = opMMC, rn.Value
		if in.k, err = c.varSlot(lv); err != nil {
			return false, err
		}
	default:
		return false, nil
	}
	c.push()
	c.code = append(c.code, in)
	return true, nil
}

// A term is a product of leaves with the sign of the sum it is added to
// folded into its constant: x - c*A*B is x + (-c)*A*B, and x - A*B is
// x + (-1*A)*B, exactly, since negation and multiplication by one are exact
// and rounding is symmetric about zero.
type term struct {
	kind    uint8 // 0 (none), 1, 2, 3 or 4 for the kinds 1, 2, 3 and Q of opAdd2T11
	i, j, k uint32
	c       float64
}

// termOf returns the term of sign*pr, with kind 0 if pr has no term kind.
func termOf(pr productForm, sign float64) term {
	t := term{i: pr.i, j: pr.j, k: pr.k, c: sign}
	switch pr.shape {
	case prodCV:
		t.kind, t.c = 1, sign*pr.c
	case prodVV:
		t.kind = 2
	case prodCVV:
		t.kind, t.c = 2, sign*pr.c
	case prodVVV:
		t.kind = 3
	case prodVSq:
		t.kind = 4
	}
	return t
}

// emitTwoTerms emits n as one instruction after its innermost operand when n
// has the form (X ± t1) ± t2 with products t1 and t2 of a term kind,
// reporting whether it did.
func (c *compiler) emitTwoTerms(n *Binary) (bool, error) {
	inner, ok := n.L.(*Binary)
	if n.Op != OpAdd && n.Op != OpSub || !ok || inner.Op != OpAdd && inner.Op != OpSub {
		return false, nil
	}
	sign := func(op Op) float64 {
		if op == OpSub {
			return -1
		}
		return 1
	}
	p1, err := c.product(inner.R)
	if err != nil {
		return false, err
	}
	t1 := termOf(p1, sign(inner.Op))
	if t1.kind == 0 {
		return false, nil
	}
	p2, err := c.product(n.R)
	if err != nil {
		return false, err
	}
	t2 := termOf(p2, sign(n.Op))
	if t2.kind == 0 {
		return false, nil
	}
	if err := c.emit(inner.L); err != nil {
		return false, err
	}
	c.code = append(c.code, instr{op: opAdd2T11 + opcode(4*(t1.kind-1)+t2.kind-1),
		i: t1.i, j: t1.j, k: t1.k, c: t1.c, l: t2.i, m: t2.j, n: t2.k, d: t2.c})
	return true, nil
}

// emitWithProduct emits other and then the operation ops[shape] with the
// product p, reporting whether p is a product of such a shape.
func (c *compiler) emitWithProduct(other, p Node, ops map[shape]opcode) (bool, error) {
	pr, err := c.product(p)
	if err != nil {
		return false, err
	}
	op, ok := ops[pr.shape]
	if !ok {
		return false, nil
	}
	if err := c.emit(other); err != nil {
		return false, err
	}
	c.addProduct(op, pr)
	return true, nil
}

// A shape is the form of a product of leaves with its own instructions.
type shape uint8

const (
	notProduct shape = iota
	prodVV           // A*B
	prodVVV          // A*B*C
	prodCV           // c*A
	prodCVV          // c*A*B
	prodVSq          // A*B^2
)

// Instructions by product shape: loads, and operations with the product
// on the right (x op product) and on the left (product op x).
var (
	pushProduct = [...]opcode{prodVVV: opMulVVV, prodCVV: opMulCVV, prodVSq: 0}
	productOps  = map[Op]map[shape]opcode{
		OpAdd: {prodVV: opAddMulVV, prodVVV: opAddMulVVV, prodCV: opAddMulCV, prodCVV: opAddMulCVV, prodVSq: opAddMulVSq},
		OpSub: {prodVV: opSubMulVV, prodVVV: opSubMulVVV, prodCV: opSubMulCV, prodCVV: opSubMulCVV, prodVSq: opSubMulVSq},
	}
	rproductOps = map[Op]map[shape]opcode{
		OpAdd: productOps[OpAdd], // addition commutes exactly
		OpDiv: {prodVV: opRDivMulVV, prodCV: opRDivMulCV},
	}
)

type productForm struct {
	shape   shape
	i, j, k uint32
	c       float64
}

// product classifies n as a product of leaves of one of the shapes. A
// product is multiplied left to right, as written; a constant second factor
// is moved first, which changes no result since multiplication commutes
// exactly, and B^2 is B*B as in emitPowConst.
func (c *compiler) product(n Node) (productForm, error) {
	var buf [5]Node
	fs := buf[:0] // factors, last first; at most 4 before it gives up
	for {
		b, isMul := n.(*Binary)
		if !isMul || b.Op != OpMul {
			break
		}
		fs = append(fs, b.R)
		n = b.L
		if len(fs) > 3 {
			return productForm{}, nil // no shape has more than 3 factors: stop early on long chains
		}
	}
	fs = append(fs, n)
	slices.Reverse(fs)
	var pr productForm
	if len(fs) < 2 || len(fs) > 3 {
		return pr, nil
	}
	if num, ok := fs[1].(*Number); ok {
		if _, ok := fs[0].(*Variable); !ok {
			return pr, nil
		}
		fs[0], fs[1] = num, fs[0]
	}
	if num, ok := fs[0].(*Number); ok {
		pr.c, pr.shape = num.Value, prodCV
		fs = fs[1:]
	}
	var slots [3]uint32
	for m, f := range fs {
		v, ok := f.(*Variable)
		if !ok {
			// The last factor of A*B^2 may be a square.
			b, isBin := f.(*Binary)
			if m != 1 || len(fs) != 2 || pr.shape != notProduct || !isBin || b.Op != OpPow {
				return productForm{}, nil
			}
			e, isNum := numOf(b.R)
			if v, ok = b.L.(*Variable); !ok || !isNum || e != 2 {
				return productForm{}, nil
			}
			pr.shape = prodVSq
		}
		s, err := c.varSlot(v)
		if err != nil {
			return productForm{}, err
		}
		slots[m] = s
	}
	pr.i, pr.j, pr.k = slots[0], slots[1], slots[2]
	switch {
	case pr.shape == prodVSq:
	case pr.shape == prodCV && len(fs) == 2:
		pr.shape = prodCVV
	case pr.shape == prodCV && len(fs) == 1:
	case len(fs) == 2:
		pr.shape = prodVV
	case len(fs) == 3:
		pr.shape = prodVVV
	default:
		return productForm{}, nil
	}
	return pr, nil
}

// addProduct emits op with the product pr.
func (c *compiler) addProduct(op opcode, pr productForm) {
	c.code = append(c.code, instr{op: op, i: pr.i, j: pr.j, k: pr.k, c: pr.c})
}

// emitPowConst emits base^e with special forms for small integer and half
// exponents; it reports false, emitting nothing, for other exponents.
func (c *compiler) emitPowConst(base Node, e float64) bool {
	var ops []instr
	switch {
	case e == 2:
		ops = []instr{{op: opSq}}
	case e == 3:
		ops = []instr{{op: opCube}}
	case e == -1:
		ops = []instr{{op: opRecip}}
	case e == 0.5:
		ops = []instr{{op: opSqrt}}
	case e == -0.5:
		ops = []instr{{op: opSqrt}, {op: opRecip}}
	case e == math.Trunc(e) && math.Abs(e) <= 64:
		ops = []instr{{op: opPowI, i: uint32(int32(e))}}
	default:
		return false
	}
	if err := c.emit(base); err != nil {
		// Report through the general path, which emits base again and
		// returns the same error.
		return false
	}
	c.code = append(c.code, ops...)
	return true
}

// Eval evaluates the program with variable values vars, indexed by the slots
// given at compile time. It does not allocate. It returns NaN if vars is
// shorter than p.Slots().
func (p *Program) Eval(vars []float64) float64 {
	if len(vars) < p.slots {
		return math.NaN()
	}
	code, s := p.code, p.stack
	sp := 0 // number of saved values
	var x float64
	for k := range code {
		in := &code[k]
		switch in.op {
		case opConst:
			s[sp] = x
			sp++
			x = in.c
		case opVar:
			s[sp] = x
			sp++
			x = vars[in.i]
		case opAddVV:
			s[sp] = x
			sp++
			x = vars[in.i] + vars[in.j]
		case opSubVV:
			s[sp] = x
			sp++
			x = vars[in.i] - vars[in.j]
		case opMulVV:
			s[sp] = x
			sp++
			x = vars[in.i] * vars[in.j]
		case opDivVV:
			s[sp] = x
			sp++
			x = vars[in.i] / vars[in.j]
		case opAddCV:
			s[sp] = x
			sp++
			x = in.c + vars[in.i]
		case opSubCV:
			s[sp] = x
			sp++
			x = in.c - vars[in.i]
		case opMulCV:
			s[sp] = x
			sp++
			x = in.c * vars[in.i]
		case opDivCV:
			s[sp] = x
			sp++
			x = in.c / vars[in.i]
		case opDivVC:
			s[sp] = x
			sp++
			x = vars[in.i] / in.c
		case opAdd:
			sp--
			x = s[sp] + x
		case opSub:
			sp--
			x = s[sp] - x
		case opMul:
			sp--
			x = s[sp] * x
		case opDiv:
			sp--
			x = s[sp] / x
		case opPow:
			sp--
			x = math.Pow(s[sp], x)
		case opAddV:
			x += vars[in.i]
		case opSubV:
			x -= vars[in.i]
		case opRSubV:
			x = vars[in.i] - x
		case opMulV:
			x *= vars[in.i]
		case opDivV:
			x /= vars[in.i]
		case opRDivV:
			x = vars[in.i] / x
		case opPowV:
			x = math.Pow(x, vars[in.i])
		case opRPowV:
			x = math.Pow(vars[in.i], x)
		case opAddC:
			x += in.c
		case opRSubC:
			x = in.c - x
		case opMulC:
			x *= in.c
		case opDivC:
			x /= in.c
		case opRDivC:
			x = in.c / x
		case opPowC:
			x = math.Pow(x, in.c)
		case opRPowC:
			x = math.Pow(in.c, x)
		case opNeg:
			x = -x
		case opSq:
			x *= x
		case opCube:
			x = x * x * x
		case opRecip:
			x = 1 / x
		case opPowI:
			x = powi(x, int(int32(in.i)))
		case opSqrt:
			x = math.Sqrt(x)
		case opExp:
			x = math.Exp(x)
		case opLog:
			x = math.Log(x)
		case opLog10:
			x = math.Log10(x)
		case opAbs:
			x = math.Abs(x)
		case opSign:
			x = sign(x)
		case opMin:
			sp--
			x = math.Min(s[sp], x)
		case opMax:
			sp--
			x = math.Max(s[sp], x)
		case opIfLE:
			sp -= 3
			if s[sp] <= s[sp+1] {
				x = s[sp+2]
			}
		case opFn1:
			x = apply1(fnID(in.i), x)
		case opMulVVV:
			s[sp] = x
			sp++
			x = vars[in.i] * vars[in.j] * vars[in.k]
		case opMulCVV:
			s[sp] = x
			sp++
			x = in.c * vars[in.i] * vars[in.j]
		case opAddMulVV:
			x += vars[in.i] * vars[in.j]
		case opSubMulVV:
			x -= vars[in.i] * vars[in.j]
		case opAddMulVVV:
			x += vars[in.i] * vars[in.j] * vars[in.k]
		case opSubMulVVV:
			x -= vars[in.i] * vars[in.j] * vars[in.k]
		case opAddMulCV:
			x += in.c * vars[in.i]
		case opSubMulCV:
			x -= in.c * vars[in.i]
		case opAddMulCVV:
			x += in.c * vars[in.i] * vars[in.j]
		case opSubMulCVV:
			x -= in.c * vars[in.i] * vars[in.j]
		case opAddMulVSq:
			b := vars[in.j]
			x += vars[in.i] * (b * b)
		case opSubMulVSq:
			b := vars[in.j]
			x -= vars[in.i] * (b * b)
		case opRDivMulVV:
			x = vars[in.i] * vars[in.j] / x
		case opRDivMulCV:
			x = in.c * vars[in.i] / x
		case opMM:
			s[sp] = x
			sp++
			x = vars[in.i] * vars[in.j] / (vars[in.k] + vars[in.l])
		case opMMC:
			s[sp] = x
			sp++
			x = vars[in.i] * vars[in.j] / (in.c + vars[in.k])
		case opAdd2T11:
			x = x + float64(in.c*vars[in.i]) + float64(in.d*vars[in.l])
		case opAdd2T12:
			x = x + float64(in.c*vars[in.i]) + float64(in.d*vars[in.l]*vars[in.m])
		case opAdd2T13:
			x = x + float64(in.c*vars[in.i]) + float64(in.d*vars[in.l]*vars[in.m]*vars[in.n])
		case opAdd2T1Q:
			x = x + float64(in.c*vars[in.i]) + float64(in.d*vars[in.l]*(vars[in.m]*vars[in.m]))
		case opAdd2T21:
			x = x + float64(in.c*vars[in.i]*vars[in.j]) + float64(in.d*vars[in.l])
		case opAdd2T22:
			x = x + float64(in.c*vars[in.i]*vars[in.j]) + float64(in.d*vars[in.l]*vars[in.m])
		case opAdd2T23:
			x = x + float64(in.c*vars[in.i]*vars[in.j]) + float64(in.d*vars[in.l]*vars[in.m]*vars[in.n])
		case opAdd2T2Q:
			x = x + float64(in.c*vars[in.i]*vars[in.j]) + float64(in.d*vars[in.l]*(vars[in.m]*vars[in.m]))
		case opAdd2T31:
			x = x + float64(in.c*vars[in.i]*vars[in.j]*vars[in.k]) + float64(in.d*vars[in.l])
		case opAdd2T32:
			x = x + float64(in.c*vars[in.i]*vars[in.j]*vars[in.k]) + float64(in.d*vars[in.l]*vars[in.m])
		case opAdd2T33:
			x = x + float64(in.c*vars[in.i]*vars[in.j]*vars[in.k]) + float64(in.d*vars[in.l]*vars[in.m]*vars[in.n])
		case opAdd2T3Q:
			x = x + float64(in.c*vars[in.i]*vars[in.j]*vars[in.k]) + float64(in.d*vars[in.l]*(vars[in.m]*vars[in.m]))
		case opAdd2TQ1:
			x = x + float64(in.c*vars[in.i]*(vars[in.j]*vars[in.j])) + float64(in.d*vars[in.l])
		case opAdd2TQ2:
			x = x + float64(in.c*vars[in.i]*(vars[in.j]*vars[in.j])) + float64(in.d*vars[in.l]*vars[in.m])
		case opAdd2TQ3:
			x = x + float64(in.c*vars[in.i]*(vars[in.j]*vars[in.j])) + float64(in.d*vars[in.l]*vars[in.m]*vars[in.n])
		case opAdd2TQQ:
			x = x + float64(in.c*vars[in.i]*(vars[in.j]*vars[in.j])) + float64(in.d*vars[in.l]*(vars[in.m]*vars[in.m]))
		case opStoreT:
			p.temps[in.i] = x
		case opLoadT:
			s[sp] = x
			sp++
			x = p.temps[in.i]
		}
	}
	return x
}

// powi returns x^n by repeated squaring.
func powi(x float64, n int) float64 {
	neg := n < 0
	if neg {
		n = -n
	}
	r := 1.0
	for n > 0 {
		if n&1 == 1 {
			r *= x
		}
		x *= x
		n >>= 1
	}
	if neg {
		return 1 / r
	}
	return r
}
