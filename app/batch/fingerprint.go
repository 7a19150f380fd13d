package main

// Fingerprints of partial results: everything that determines a part's
// result, so that merge refuses parts of different studies and says how
// they differ.

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"sort"
	"strings"

	"kinetarium/app/run"
)

// fingerprint identifies what a part was computed from: the spec's content
// (without its "model" path: the model is identified by its content), the
// model's content as saved, the seed of a population and the part format.
type fingerprint struct {
	Format      string          `json:"format"`
	SpecSHA256  string          `json:"spec_sha256"`
	ModelSHA256 string          `json:"model_sha256"`
	Seed        *uint64         `json:"seed,omitempty"`
	Spec        json.RawMessage `json:"spec"` // the canonical spec, to say how two differ
}

// newFingerprint makes the fingerprint of a run of the spec whose file
// holds specData, of the model described by prov.
func newFingerprint(specData []byte, prov *run.Provenance, seed *uint64) (*fingerprint, error) {
	var spec map[string]any
	if err := json.Unmarshal(specData, &spec); err != nil {
		return nil, err
	}
	delete(spec, "model")
	canon, err := json.Marshal(spec) // map keys sorted: the same content gives the same bytes
	if err != nil {
		return nil, err
	}
	sum := sha256.Sum256(canon)
	return &fingerprint{Format: PartFormat, SpecSHA256: hex.EncodeToString(sum[:]), ModelSHA256: prov.ModelSHA256, Seed: seed, Spec: canon}, nil
}

// differ says how the part b differs from the part a, or "" when their
// fingerprints agree.
func (a *fingerprint) differ(b *fingerprint) string {
	var why []string
	if a.Format != b.Format {
		why = append(why, fmt.Sprintf("part format %s against %s", b.Format, a.Format))
	}
	if a.ModelSHA256 != b.ModelSHA256 {
		why = append(why, fmt.Sprintf("the model's content differs (SHA-256 %.12s… against %.12s…)", b.ModelSHA256, a.ModelSHA256))
	}
	if a.SpecSHA256 != b.SpecSHA256 {
		var ta, tb any
		_ = json.Unmarshal(a.Spec, &ta)
		_ = json.Unmarshal(b.Spec, &tb)
		d := jsonDiff("", ta, tb, nil)
		if len(d) == 0 {
			d = []string{fmt.Sprintf("SHA-256 %.12s… against %.12s…", b.SpecSHA256, a.SpecSHA256)}
		}
		if len(d) > 3 {
			d = append(d[:3], fmt.Sprintf("and %d more", len(d)-3))
		}
		why = append(why, "the spec differs: "+strings.Join(d, "; "))
	}
	return strings.Join(why, "; ")
}

// jsonDiff lists the paths where the JSON trees a and b differ, with b's
// value against a's.
func jsonDiff(path string, a, b any, out []string) []string {
	show := func(v any) string {
		if v == nil {
			return "absent"
		}
		s, _ := json.Marshal(v)
		return string(s)
	}
	at := func(k string) string {
		if path == "" {
			return k
		}
		return path + "." + k
	}
	switch x := a.(type) {
	case map[string]any:
		if y, ok := b.(map[string]any); ok {
			keys := map[string]bool{}
			for k := range x {
				keys[k] = true
			}
			for k := range y {
				keys[k] = true
			}
			var ks []string
			for k := range keys {
				ks = append(ks, k)
			}
			sort.Strings(ks)
			for _, k := range ks {
				out = jsonDiff(at(k), x[k], y[k], out)
			}
			return out
		}
	case []any:
		if y, ok := b.([]any); ok && len(x) == len(y) {
			for i := range x {
				out = jsonDiff(fmt.Sprintf("%s[%d]", path, i), x[i], y[i], out)
			}
			return out
		}
	}
	sa, _ := json.Marshal(a)
	sb, _ := json.Marshal(b)
	if !bytes.Equal(sa, sb) {
		if path == "" {
			path = "the whole spec"
		}
		out = append(out, fmt.Sprintf("%s is %s here, %s there", path, show(b), show(a)))
	}
	return out
}
