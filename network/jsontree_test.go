package network

import (
	"encoding/json"
	"fmt"
	"strings"
	"testing"

	"kinetarium/examples"
)

// sameTree reports where two trees differ ("" when they do not). The
// lists of a may be lazy (text is the document they are read from); those
// of b may not.
func sameTree(a, b *jnode, path, text string) string {
	switch {
	case a.kind != b.kind || a.off != b.off:
		return fmt.Sprintf("%s: kind %c at %d, want %c at %d", path, a.kind, a.off, b.kind, b.off)
	case a.lazy:
		diff, n := "", 0
		eachItem(a, text, func(i int, x *jnode) {
			n++
			if diff != "" {
				return
			}
			if i >= len(b.items) {
				diff = fmt.Sprintf("%s: more than %d items", path, len(b.items))
				return
			}
			diff = sameTree(x, b.items[i], fmt.Sprintf("%s[%d]", path, i), text)
		})
		if diff == "" && a.count != len(b.items) {
			diff = fmt.Sprintf("%s: counted %d items, want %d", path, a.count, len(b.items))
		}
		if diff == "" && n != len(b.items) {
			diff = fmt.Sprintf("%s: %d items, want %d", path, n, len(b.items))
		}
		return diff
	case a.str != b.str || a.b != b.b:
		return fmt.Sprintf("%s: value %q %v, want %q %v", path, a.str, a.b, b.str, b.b)
	case len(a.keys) != len(b.keys) || len(a.items) != len(b.items):
		return fmt.Sprintf("%s: %d keys %d items, want %d keys %d items", path, len(a.keys), len(a.items), len(b.keys), len(b.items))
	}
	for i := range a.keys {
		if a.keys[i] != b.keys[i] || a.kOffs[i] != b.kOffs[i] {
			return fmt.Sprintf("%s: key %q at %d, want %q at %d", path, a.keys[i], a.kOffs[i], b.keys[i], b.kOffs[i])
		}
		if d := sameTree(a.vals[i], b.vals[i], path+"."+a.keys[i], text); d != "" {
			return d
		}
	}
	for i := range a.items {
		if d := sameTree(a.items[i], b.items[i], fmt.Sprintf("%s[%d]", path, i), text); d != "" {
			return d
		}
	}
	return ""
}

// compareParsers checks that the direct scan builds the tree that
// encoding/json's tokens build, on a valid document, also when it leaves
// the top-level object's lists to be read an item at a time.
func compareParsers(t *testing.T, data []byte) {
	t.Helper()
	if !json.Valid(data) {
		return
	}
	want, err := parseJSONTokens(data)
	if err != nil {
		t.Fatalf("the token reader refuses a valid document: %v", err)
	}
	got, err := parseJSON(data)
	if err != nil {
		t.Fatal(err)
	}
	if d := sameTree(got, want, "$", ""); d != "" {
		t.Errorf("%s", d)
	}
	lazy, err := parseModelJSON(data, string(data))
	if err != nil {
		t.Fatal(err)
	}
	if d := sameTree(lazy, want, "$", string(data)); d != "" {
		t.Errorf("read an item at a time: %s", d)
	}
}

// The direct scan of valid documents gives the tree of encoding/json's
// tokens (the standard library's reader as the reference): on every
// example model, and on escapes, invalid UTF-8, repeated keys, numbers in
// every form and white space everywhere.
func TestFastJSONMatchesTokens(t *testing.T) {
	for _, name := range examples.Names() {
		b, err := examples.Open(name)
		if err != nil {
			t.Fatal(err)
		}
		compareParsers(t, b)
	}
	for _, doc := range []string{
		`{"a":1,"a":-2.5e+3,"b":[true,false,null,{}],"c":[],"d":"x\"y\\u00e9\n","e":"é","f":"` + "\xff" + `"}`,
		" \t\r\n{ \"k\" : [ 1 , 2 ] , \"\" : { } } \n",
		`"top"`, `0`, `-0.0E-0`, `[[[[]]]]`,
		`{"l":["a]\"[{\\", {"k":"}]"}, []], "m":[[1,[2]],{}] , "n" : [ ] }`,
	} {
		compareParsers(t, []byte(doc))
	}
}

func FuzzJSONTree(f *testing.F) {
	f.Add([]byte(`{"a":1,"a":-2.5e+3,"b":[true,false,null,{}],"d":"x\"y\\u00e9\n"}`))
	f.Add([]byte(`{"format": "kinetarium.model/1", "species": [{"name": "A", "initial": 1}]}`))
	f.Fuzz(func(t *testing.T, data []byte) { compareParsers(t, data) })
}

// A syntax error is placed at the offending character (the decoder's own
// offset pointed at an earlier key: "2:4" for the x below).
func TestSyntaxErrorPlace(t *testing.T) {
	for _, c := range []struct{ src, at string }{
		{"{\"format\": \"kinetarium.model/1\",\n \"title\": x}", "m.json:2:11: "},
		{"{\"format\": \"kinetarium.model/1\",\n \"species\": [{\"name\": \"A\",, \"initial\": 1}]}", "m.json:2:27: "},
	} {
		_, err := Read(strings.NewReader(c.src), "m.json")
		if err == nil || !strings.HasPrefix(err.Error(), c.at) || !strings.Contains(err.Error(), "invalid character") {
			t.Errorf("%q: %v; want it at %s", c.src, err, c.at)
		}
	}
}
