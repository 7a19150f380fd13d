package network

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"slices"
	"strings"
	"unicode/utf8"

	"kinetarium/internal/atomicfile"
)

// jnode is a JSON value with the byte offset where it starts, so that the
// model reader can say on which line and column each problem is.
type jnode struct {
	kind byte // '{' object, '[' list, '"' text, '0' number, 'b' true/false, 'n' null
	b    bool
	// lazy marks a list whose items are not in the tree: str holds its
	// text (a slice of the document's), read an item at a time by
	// eachItem. The model reader's long lists (species, reactions, …)
	// are read so, so that the tree of the whole file is never in memory.
	lazy  bool
	count int // the number of items of a lazy list
	off   int64
	keys  []string // object keys in file order
	kOffs []int64  // where each key starts
	vals  []*jnode // object values, in the order of keys
	items []*jnode // list items
	// str is the text of a string, or the digits of a number as written
	// (num gives them as a json.Number). One field for both keeps the
	// node at 128 bytes: a large model file has hundreds of thousands.
	str string
}

// num returns a number node's digits.
func (n *jnode) num() json.Number { return json.Number(n.str) }

// get returns the value of key k of an object.
func (n *jnode) get(k string) (*jnode, bool) {
	for i, key := range n.keys {
		if key == k {
			return n.vals[i], true
		}
	}
	return nil, false
}

// what names the kind of n for messages.
func (n *jnode) what() string {
	switch n.kind {
	case '{':
		return "an object"
	case '[':
		return "a list"
	case '"':
		return "text"
	case 'b':
		return "true/false"
	case 'n':
		return "null"
	}
	return "a number"
}

// syntaxError is a JSON syntax error at a byte offset.
type syntaxError struct {
	off int64
	msg string
}

func (e *syntaxError) Error() string { return e.msg }

// parseJSON reads one JSON value from data into a tree, and refuses text
// after it. A valid document (json.Valid) is read by a direct scan of the
// bytes; any other is read token by token with encoding/json's decoder,
// whose errors say what is wrong where.
func parseJSON(data []byte) (*jnode, error) {
	return parseJSONText(data, string(data))
}

// parseJSONText is parseJSON on data whose text is also given as a
// string: the strings of the tree are then slices of text, with no copy
// of their own.
func parseJSONText(data []byte, text string) (*jnode, error) {
	if json.Valid(data) {
		return parseValid(text), nil
	}
	return parseJSONTokens(data)
}

// parseValid reads text that json.Valid accepted.
func parseValid(text string) *jnode {
	f := fastParser{data: text}
	f.space()
	return f.value()
}

// parseModelJSON is parseJSONText for the model reader: on a valid
// document, the lists that are members of the top-level object are left
// lazy (see jnode.lazy), to be read an item at a time by eachItem.
func parseModelJSON(data []byte, text string) (*jnode, error) {
	if json.Valid(data) {
		f := fastParser{data: text, lazyLists: true}
		f.space()
		return f.value(), nil
	}
	return parseJSONTokens(data)
}

// length returns the number of items of the list n.
func (n *jnode) length() int {
	if n.lazy {
		return n.count
	}
	return len(n.items)
}

// eachItem calls fn with each item of the list n in order, and with its
// index. The items of a lazy list are read from the document text (of
// which n.str is a slice) one at a time, into nodes that are reused for
// the next item: fn must not keep x or any node under it.
func eachItem(n *jnode, text string, fn func(i int, x *jnode)) {
	if !n.lazy {
		for i, x := range n.items {
			fn(i, x)
		}
		return
	}
	f := fastParser{data: text, pos: int(n.off) + 1}
	for i := 0; ; i++ {
		f.space()
		if f.data[f.pos] == ']' {
			return
		}
		f.reuse()
		fn(i, f.value())
		f.space()
		if f.data[f.pos] == ',' {
			f.pos++
		}
	}
}

// parseJSONTokens is parseJSON by encoding/json's tokens.
func parseJSONTokens(data []byte) (*jnode, error) {
	p := &jparser{data: data, dec: json.NewDecoder(bytes.NewReader(data))}
	p.dec.UseNumber()
	tok, err := p.token()
	if err != nil {
		return nil, err
	}
	n, err := p.value(tok)
	if err != nil {
		return nil, err
	}
	off := p.dec.InputOffset()
	if rest := data[off:]; len(bytes.TrimSpace(rest)) > 0 {
		off += int64(len(rest) - len(bytes.TrimLeft(rest, " \t\r\n")))
		return nil, &syntaxError{off, "unexpected text after the end of the model"}
	}
	return n, nil
}

type jparser struct {
	data  []byte
	dec   *json.Decoder
	start int64 // where the last token starts
}

// token reads the next token and remembers where it starts.
func (p *jparser) token() (json.Token, error) {
	off := p.dec.InputOffset()
	tok, err := p.dec.Token()
	if err != nil {
		var se *json.SyntaxError
		switch {
		case err == io.EOF || err == io.ErrUnexpectedEOF || strings.Contains(err.Error(), "unexpected end"):
			return nil, &syntaxError{int64(len(p.data)), atomicfile.TruncatedJSON}
		case errors.As(err, &se):
			return nil, &syntaxError{atomicfile.JSONSyntaxOffset(p.data, se), "invalid JSON: " + se.Error()}
		}
		return nil, &syntaxError{off, "invalid JSON: " + err.Error()}
	}
	// Skip the space and the ',' or ':' the decoder consumed before the
	// token.
	for off < int64(len(p.data)) && strings.IndexByte(" \t\r\n,:", p.data[off]) >= 0 {
		off++
	}
	p.start = off
	return tok, nil
}

func (p *jparser) value(tok json.Token) (*jnode, error) {
	n := &jnode{off: p.start}
	switch t := tok.(type) {
	case json.Delim:
		switch t {
		case '{':
			n.kind = '{'
			for p.dec.More() {
				kt, err := p.token()
				if err != nil {
					return nil, err
				}
				koff := p.start
				k, _ := kt.(string)
				vt, err := p.token()
				if err != nil {
					return nil, err
				}
				v, err := p.value(vt)
				if err != nil {
					return nil, err
				}
				n.keys, n.kOffs, n.vals = append(n.keys, k), append(n.kOffs, koff), append(n.vals, v)
			}
		case '[':
			n.kind = '['
			for p.dec.More() {
				vt, err := p.token()
				if err != nil {
					return nil, err
				}
				v, err := p.value(vt)
				if err != nil {
					return nil, err
				}
				n.items = append(n.items, v)
			}
		default:
			return nil, &syntaxError{p.start, fmt.Sprintf("invalid JSON: unexpected %q", rune(t))}
		}
		if _, err := p.token(); err != nil { // the closing delimiter
			return nil, err
		}
	case string:
		n.kind, n.str = '"', t
	case json.Number:
		n.kind, n.str = '0', string(t)
	case bool:
		n.kind, n.b = 'b', t
	case nil:
		n.kind = 'n'
	}
	return n, nil
}

// fastParser reads a document that json.Valid accepted. It builds the
// same tree as the token reader (offsets, keys in file order, repeated
// keys kept, numbers as their text) in one pass over the bytes, several
// times faster than encoding/json's Token for files of thousands of
// items.
type fastParser struct {
	data string
	pos  int
	// Members and items are gathered on these stacks and copied into
	// slices of their exact length when an object or list ends, instead
	// of growing three slices per object.
	keys  []string
	kOffs []int64
	vals  []*jnode
	items []*jnode
	slab  []jnode // nodes are carved from here, a block at a time
	first []jnode // the first block, which reuse hands out again
	// lazyLists leaves the lists that are members of the top-level
	// object unread (jnode.lazy); depth is the nesting of the value
	// being read (0 at the top).
	lazyLists bool
	depth     int
}

// node returns a new node starting at off.
func (f *fastParser) node(off int) *jnode {
	if len(f.slab) == 0 {
		f.slab = make([]jnode, 256)
		if f.first == nil {
			f.first = f.slab
		}
	}
	n := &f.slab[0]
	f.slab = f.slab[1:]
	*n = jnode{off: int64(off)}
	return n
}

// reuse hands out the nodes of the first block again, and drops the
// blocks after it: the nodes read so far must no longer be in use.
func (f *fastParser) reuse() {
	f.slab = f.first
}

// skipList moves past the list that starts at f.pos, in a valid
// document, and returns the number of its items.
func (f *fastParser) skipList() (items int) {
	start, depth, commas := f.pos, 0, 0
	for {
		switch f.data[f.pos] {
		case '[', '{':
			depth++
		case ']', '}':
			depth--
		case ',':
			if depth == 1 {
				commas++
			}
		case '"':
			f.pos++
			for f.data[f.pos] != '"' {
				if f.data[f.pos] == '\\' {
					f.pos++
				}
				f.pos++
			}
		}
		f.pos++
		if depth == 0 {
			break
		}
	}
	if strings.TrimSpace(f.data[start+1:f.pos-1]) == "" {
		return 0
	}
	return commas + 1
}

func (f *fastParser) space() {
	for f.pos < len(f.data) {
		switch f.data[f.pos] {
		case ' ', '\t', '\r', '\n':
			f.pos++
		default:
			return
		}
	}
}

func (f *fastParser) value() *jnode {
	n := f.node(f.pos)
	switch c := f.data[f.pos]; c {
	case '{':
		n.kind = '{'
		f.pos++
		f.space()
		if f.data[f.pos] == '}' {
			f.pos++
			return n
		}
		base := len(f.keys)
		for {
			f.space()
			koff := int64(f.pos)
			k := f.str()
			f.space()
			f.pos++ // ':'
			f.space()
			var v *jnode
			if f.lazyLists && f.depth == 0 && f.data[f.pos] == '[' {
				v = f.node(f.pos)
				v.kind, v.lazy = '[', true
				v.count = f.skipList()
				v.str = f.data[v.off:f.pos]
			} else {
				f.depth++
				v = f.value()
				f.depth--
			}
			f.keys, f.kOffs, f.vals = append(f.keys, k), append(f.kOffs, koff), append(f.vals, v)
			f.space()
			c := f.data[f.pos]
			f.pos++ // ',' or '}'
			if c == '}' {
				break
			}
		}
		n.keys = slices.Clone(f.keys[base:])
		n.kOffs = slices.Clone(f.kOffs[base:])
		n.vals = slices.Clone(f.vals[base:])
		clear(f.vals[base:]) // no stale pointers on the stack
		f.keys, f.kOffs, f.vals = f.keys[:base], f.kOffs[:base], f.vals[:base]
	case '[':
		n.kind = '['
		f.pos++
		f.space()
		if f.data[f.pos] == ']' {
			f.pos++
			return n
		}
		base := len(f.items)
		for {
			f.space()
			f.depth++
			v := f.value()
			f.depth--
			f.items = append(f.items, v)
			f.space()
			c := f.data[f.pos]
			f.pos++ // ',' or ']'
			if c == ']' {
				break
			}
		}
		n.items = slices.Clone(f.items[base:])
		clear(f.items[base:])
		f.items = f.items[:base]
	case '"':
		n.kind, n.str = '"', f.str()
	case 't':
		n.kind, n.b = 'b', true
		f.pos += 4
	case 'f':
		n.kind = 'b'
		f.pos += 5
	case 'n':
		n.kind = 'n'
		f.pos += 4
	default:
		start := f.pos
		for f.pos < len(f.data) && strings.IndexByte("+-0123456789.eE", f.data[f.pos]) >= 0 {
			f.pos++
		}
		n.kind, n.str = '0', f.data[start:f.pos]
	}
	return n
}

// str reads a string at f.pos. One without escapes in valid UTF-8 is
// taken as it is, a slice of the text; others are decoded by
// encoding/json, so that escapes and invalid bytes read as the token
// reader reads them.
func (f *fastParser) str() string {
	start := f.pos
	f.pos++
	plain := true
	for {
		c := f.data[f.pos]
		if c == '"' {
			break
		}
		if c == '\\' {
			plain = false
			f.pos++
		} else if c >= utf8.RuneSelf {
			plain = false
		}
		f.pos++
	}
	f.pos++
	raw := f.data[start:f.pos]
	if plain {
		return raw[1 : len(raw)-1]
	}
	var s string
	json.Unmarshal([]byte(raw), &s) // valid: json.Valid read it
	return s
}
