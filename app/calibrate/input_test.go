package calibrate

import (
	"fmt"
	"os"
	"strings"
	"testing"
	"unicode/utf16"
)

// utf16LE encodes s as UTF-16 with a byte-order mark, as a spreadsheet's
// "Unicode text" export does.
func utf16LE(s string) []byte {
	b := []byte{0xFF, 0xFE}
	for _, u := range utf16.Encode([]rune(s)) {
		b = append(b, byte(u), byte(u>>8))
	}
	return b
}

// A fit specification and a measurement file are read as the model files
// are (README, Limits): UTF-8 with or without a byte-order mark, a UTF-16
// file named as such, a truncated specification placed where it ends, and
// a file larger than the limit (a device such as /dev/zero included)
// refused instead of exhausting memory.
func TestSpecAndDataInput(t *testing.T) {
	if _, err := ReadSpec([]byte("\xef\xbb\xbf"+goodSpec), "fit.json"); err != nil {
		t.Errorf("spec with a byte-order mark: %v", err)
	}
	if _, err := ReadSpec(utf16LE(goodSpec), "fit.json"); err == nil || !strings.Contains(err.Error(), "fit.json: the file is UTF-16 text") {
		t.Errorf("UTF-16 spec: %v; want it named", err)
	}
	cut := goodSpec[:strings.Index(goodSpec, `"estimate"`)]
	lines := strings.Split(cut, "\n")
	at := fmt.Sprintf("fit.json:%d:%d:", len(lines), len(lines[len(lines)-1])+1)
	if _, err := ReadSpec([]byte(cut), "fit.json"); err == nil || !strings.Contains(err.Error(), at+" not valid JSON: the file ends too early (truncated?)") {
		t.Errorf("truncated spec: %v; want it placed at %s, where it ends", err, at)
	}
	if _, err := ReadSpec([]byte("{\"format\": x}"), "fit.json"); err == nil || !strings.Contains(err.Error(), "fit.json:1:12: ") {
		t.Errorf("syntax error: %v; want it at the x, 1:12", err)
	}
	const csv = "time,P,sd_P\n1,0.5,0.1\n"
	if d, err := ReadData([]byte("\xef\xbb\xbf"+csv), "run.csv", nil); err != nil || len(d.Points) != 1 {
		t.Errorf("data with a byte-order mark: %v", err)
	}
	if _, err := ReadData(utf16LE(csv), "run.csv", nil); err == nil || !strings.Contains(err.Error(), "run.csv: the file is UTF-16 text") {
		t.Errorf("UTF-16 data: %v; want it named", err)
	}
	if _, err := os.Stat("/dev/zero"); err == nil {
		if _, err := LoadSpec("/dev/zero"); err == nil || !strings.Contains(err.Error(), "larger than 16 MiB") {
			t.Errorf("LoadSpec(/dev/zero): %v; want it refused", err)
		}
		if _, err := LoadData("/dev/zero", nil); err == nil || !strings.Contains(err.Error(), "larger than 64 MiB") {
			t.Errorf("LoadData(/dev/zero): %v; want it refused", err)
		}
	}
}
