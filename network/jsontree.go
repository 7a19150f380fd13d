package network

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"strings"
)

// jnode is a JSON value with the byte offset where it starts, so that the
// model reader can say on which line and column each problem is.
type jnode struct {
	kind  byte // '{' object, '[' list, '"' text, '0' number, 'b' true/false, 'n' null
	off   int64
	keys  []string // object keys in file order
	kOffs []int64  // where each key starts
	vals  []*jnode // object values, in the order of keys
	items []*jnode // list items
	str   string
	num   json.Number
	b     bool
}

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
// after it.
func parseJSON(data []byte) (*jnode, error) {
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
			return nil, &syntaxError{int64(len(p.data)), "the file ends too early; is a closing brace or bracket missing?"}
		case errors.As(err, &se):
			return nil, &syntaxError{se.Offset, "invalid JSON: " + se.Error()}
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
		n.kind, n.num = '0', t
	case bool:
		n.kind, n.b = 'b', t
	case nil:
		n.kind = 'n'
	}
	return n, nil
}
