package plotting

import (
	"bytes"
	"compress/zlib"
	"encoding/binary"
	"encoding/xml"
	"errors"
	"fmt"
	"hash/crc32"
	"io"
	"strings"
	"time"
)

// Metadata says where a figure came from. Save writes it into the file in
// the format's own way:
//
//   - PNG: international text chunks (iTXt) with the keywords Title,
//     Software, Creation Time and Provenance;
//   - PDF: the document information dictionary, with Title, Creator and
//     Producer (the program), CreationDate and ModDate (the export time)
//     and Subject (the provenance document);
//   - SVG: a <title> element and a <metadata> element holding Dublin Core
//     terms in RDF: dc:title, dc:creator (the program), dc:date (the export
//     time) and dc:description (the provenance document).
type Metadata struct {
	Title    string    // what the figure shows, e.g. the model's title
	Software string    // the program and its version
	Created  time.Time // time of export; zero leaves it out (PDF: the present)
	// Provenance is a document, usually JSON, with the details: the
	// model, the solver settings and so on.
	Provenance []byte
}

// timeFormat is how export times are written in PNG and SVG files.
const timeFormat = time.RFC3339

// PNG text keywords Save writes. Title, Software and Creation Time are
// keywords the PNG specification predefines.
const (
	pngTitle      = "Title"
	pngSoftware   = "Software"
	pngCreated    = "Creation Time"
	pngProvenance = "Provenance"
)

var pngSignature = []byte("\x89PNG\r\n\x1a\n")

// addPNGText returns the PNG file png with an iTXt chunk for each field of
// m that is set, placed right after the IHDR chunk.
func addPNGText(png []byte, m *Metadata) ([]byte, error) {
	if !bytes.HasPrefix(png, pngSignature) || len(png) < 8+8+13+4 || string(png[12:16]) != "IHDR" {
		return nil, errors.New("plotting: not a PNG file from the encoder")
	}
	end := 8 + 8 + int(binary.BigEndian.Uint32(png[8:12])) + 4 // after IHDR
	var out bytes.Buffer
	out.Write(png[:end])
	text := func(keyword, value string) {
		if value == "" {
			return
		}
		// keyword, null, compression flag and method (none), empty
		// language tag and translated keyword, each null-terminated.
		data := append([]byte(keyword), 0, 0, 0, 0, 0)
		writePNGChunk(&out, "iTXt", append(data, value...))
	}
	text(pngTitle, m.Title)
	text(pngSoftware, m.Software)
	if !m.Created.IsZero() {
		text(pngCreated, m.Created.UTC().Format(timeFormat))
	}
	text(pngProvenance, string(m.Provenance))
	out.Write(png[end:])
	return out.Bytes(), nil
}

// writePNGChunk writes a chunk of type typ with data and its CRC.
func writePNGChunk(w *bytes.Buffer, typ string, data []byte) {
	var n [4]byte
	binary.BigEndian.PutUint32(n[:], uint32(len(data)))
	w.Write(n[:])
	crc := crc32.NewIEEE()
	crc.Write([]byte(typ))
	crc.Write(data)
	w.WriteString(typ)
	w.Write(data)
	binary.BigEndian.PutUint32(n[:], crc.Sum32())
	w.Write(n[:])
}

// maxPNGText bounds the text ReadPNGText decompresses from one chunk.
const maxPNGText = 1 << 24

// ReadPNGText returns the text chunks (tEXt, zTXt and iTXt) of a PNG
// file, by keyword, in UTF-8. It checks the signature and every chunk's
// CRC and stops at IEND.
func ReadPNGText(r io.Reader) (map[string]string, error) {
	var sig [8]byte
	if _, err := io.ReadFull(r, sig[:]); err != nil || !bytes.Equal(sig[:], pngSignature) {
		return nil, errors.New("plotting: not a PNG file: bad signature")
	}
	text := make(map[string]string)
	for {
		var hdr [8]byte
		if _, err := io.ReadFull(r, hdr[:]); err != nil {
			return nil, fmt.Errorf("plotting: PNG ends before IEND: %w", err)
		}
		n := binary.BigEndian.Uint32(hdr[:4])
		typ := string(hdr[4:8])
		if n > 1<<31-1 {
			return nil, fmt.Errorf("plotting: PNG chunk %q of length %d", typ, n)
		}
		// Chunks other than text are skipped without being held.
		crc := crc32.NewIEEE()
		crc.Write(hdr[4:8])
		var data []byte
		if typ == "tEXt" || typ == "zTXt" || typ == "iTXt" {
			var buf bytes.Buffer
			if _, err := io.CopyN(&buf, r, int64(n)); err != nil {
				return nil, fmt.Errorf("plotting: PNG chunk %q cut short: %w", typ, err)
			}
			data = buf.Bytes()
			crc.Write(data)
		} else if _, err := io.CopyN(crc, r, int64(n)); err != nil {
			return nil, fmt.Errorf("plotting: PNG chunk %q cut short: %w", typ, err)
		}
		var sum [4]byte
		if _, err := io.ReadFull(r, sum[:]); err != nil {
			return nil, fmt.Errorf("plotting: PNG chunk %q has no CRC: %w", typ, err)
		}
		if binary.BigEndian.Uint32(sum[:]) != crc.Sum32() {
			return nil, fmt.Errorf("plotting: PNG chunk %q fails its CRC", typ)
		}
		if typ == "IEND" {
			return text, nil
		}
		if data == nil {
			continue
		}
		k, v, err := parsePNGText(typ, data)
		if err != nil {
			return nil, err
		}
		text[k] = v
	}
}

// parsePNGText decodes the data of a text chunk.
func parsePNGText(typ string, data []byte) (keyword, value string, err error) {
	k, rest, ok := bytes.Cut(data, []byte{0})
	if !ok || len(k) == 0 || len(k) > 79 {
		return "", "", fmt.Errorf("plotting: PNG %s chunk has no valid keyword", typ)
	}
	keyword = latin1(k)
	switch typ {
	case "tEXt":
		return keyword, latin1(rest), nil
	case "zTXt":
		if len(rest) < 1 || rest[0] != 0 {
			return "", "", fmt.Errorf("plotting: PNG zTXt chunk %q has an unknown compression method", keyword)
		}
		v, err := inflate(rest[1:])
		if err != nil {
			return "", "", fmt.Errorf("plotting: PNG zTXt chunk %q: %w", keyword, err)
		}
		return keyword, latin1(v), nil
	}
	// iTXt: compression flag and method, language tag, translated keyword.
	if len(rest) < 2 {
		return "", "", fmt.Errorf("plotting: PNG iTXt chunk %q is cut short", keyword)
	}
	flag, method := rest[0], rest[1]
	rest = rest[2:]
	for range 2 {
		if _, rest, ok = bytes.Cut(rest, []byte{0}); !ok {
			return "", "", fmt.Errorf("plotting: PNG iTXt chunk %q is cut short", keyword)
		}
	}
	switch {
	case flag == 0:
		return keyword, string(rest), nil
	case flag == 1 && method == 0:
		v, err := inflate(rest)
		if err != nil {
			return "", "", fmt.Errorf("plotting: PNG iTXt chunk %q: %w", keyword, err)
		}
		return keyword, string(v), nil
	}
	return "", "", fmt.Errorf("plotting: PNG iTXt chunk %q has an unknown compression", keyword)
}

// inflate decompresses zlib data, up to maxPNGText bytes.
func inflate(b []byte) ([]byte, error) {
	zr, err := zlib.NewReader(bytes.NewReader(b))
	if err != nil {
		return nil, err
	}
	defer zr.Close()
	v, err := io.ReadAll(io.LimitReader(zr, maxPNGText+1))
	if err != nil {
		return nil, err
	}
	if len(v) > maxPNGText {
		return nil, errors.New("text too long")
	}
	return v, nil
}

// latin1 converts ISO 8859-1 text to UTF-8.
func latin1(b []byte) string {
	var s strings.Builder
	for _, c := range b {
		s.WriteRune(rune(c))
	}
	return s.String()
}

// PNGMetadata reads back from PNG text chunks the metadata Save writes.
func PNGMetadata(r io.Reader) (*Metadata, error) {
	text, err := ReadPNGText(r)
	if err != nil {
		return nil, err
	}
	m := &Metadata{Title: text[pngTitle], Software: text[pngSoftware]}
	if p, ok := text[pngProvenance]; ok {
		m.Provenance = []byte(p)
	}
	if t, ok := text[pngCreated]; ok {
		if m.Created, err = time.Parse(timeFormat, t); err != nil {
			return nil, fmt.Errorf("plotting: PNG %s: %w", pngCreated, err)
		}
	}
	return m, nil
}

// SVGMetadata reads back from an SVG file the metadata Save writes in its
// <metadata> element.
func SVGMetadata(r io.Reader) (*Metadata, error) {
	var doc struct {
		XMLName  xml.Name `xml:"http://www.w3.org/2000/svg svg"`
		Metadata []struct {
			ID          string `xml:"id,attr"`
			Description []struct {
				Title      string `xml:"http://purl.org/dc/elements/1.1/ title"`
				Creator    string `xml:"http://purl.org/dc/elements/1.1/ creator"`
				Date       string `xml:"http://purl.org/dc/elements/1.1/ date"`
				Provenance string `xml:"http://purl.org/dc/elements/1.1/ description"`
			} `xml:"http://www.w3.org/1999/02/22-rdf-syntax-ns# RDF>Description"`
		} `xml:"http://www.w3.org/2000/svg metadata"`
	}
	dec := xml.NewDecoder(r)
	if err := dec.Decode(&doc); err != nil {
		return nil, fmt.Errorf("plotting: reading SVG: %w", err)
	}
	for _, md := range doc.Metadata {
		if md.ID != svgMetadataID || len(md.Description) != 1 {
			continue
		}
		d := md.Description[0]
		m := &Metadata{Title: d.Title, Software: d.Creator}
		if d.Provenance != "" {
			m.Provenance = []byte(d.Provenance)
		}
		if d.Date != "" {
			t, err := time.Parse(timeFormat, d.Date)
			if err != nil {
				return nil, fmt.Errorf("plotting: SVG dc:date: %w", err)
			}
			m.Created = t
		}
		return m, nil
	}
	return nil, fmt.Errorf("plotting: SVG has no <metadata id=%q> with one rdf:Description", svgMetadataID)
}
