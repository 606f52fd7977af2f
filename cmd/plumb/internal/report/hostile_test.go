package report

import (
	"bytes"
	"encoding/json"
	"encoding/xml"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"golang.org/x/net/html"
)

// Ids, labels and column names come from user data. Strings that would
// end a script element, open a tag or leave an attribute must stay text
// everywhere: in the page's markup, in the maps' JSON and in every SVG
// file. (The browser check runs the same strings through chromium.)
var hostile = []string{
	`</script><img src=x onerror=alert(1)>`,
	`"><svg onload=alert(1)>`,
	`<!--`, `]]>`, `'; alert(3); '`, `&amp;`, "\u2028line",
}

func TestHostileStringsStayText(t *testing.T) {
	st := syntheticStudy()
	for i := range st.IDs {
		st.IDs[i] = hostile[i%len(hostile)] + "#" + st.IDs[i]
		st.Labels[i] = hostile[i%2]
	}
	st.Input.LabelColumn = `kind</script><script>alert(2)</script>`
	st.Settings[0].ID = `s"><svg onload=alert(4)>`
	dir := t.TempDir()
	out, err := Write(st, dir, Options{})
	if err != nil {
		t.Fatal(err)
	}
	page, err := os.ReadFile(out.Index)
	if err != nil {
		t.Fatal(err)
	}
	doc, err := html.Parse(bytes.NewReader(page))
	if err != nil {
		t.Fatal(err)
	}
	var scripts []string
	var walk func(n *html.Node)
	walk = func(n *html.Node) {
		if n.Type == html.ElementNode {
			for _, a := range n.Attr {
				if strings.HasPrefix(strings.ToLower(a.Key), "on") {
					t.Errorf("element <%s> has attribute %s=%q", n.Data, a.Key, a.Val)
				}
				if a.Key == "src" {
					t.Errorf("element <%s> loads %q", n.Data, a.Val)
				}
			}
			if n.Data == "img" {
				t.Errorf("page holds an <img>")
			}
			if n.Data == "script" {
				var b strings.Builder
				for c := n.FirstChild; c != nil; c = c.NextSibling {
					b.WriteString(c.Data)
				}
				scripts = append(scripts, b.String())
			}
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c)
		}
	}
	walk(doc)
	// The data script parses as JSON and gives back the strings exactly.
	if len(scripts) != 3 {
		t.Fatalf("got %d scripts want 3 (data, table, maps)", len(scripts))
	}
	var data pageData
	if err := json.Unmarshal([]byte(scripts[0]), &data); err != nil {
		t.Fatalf("maps' data is not JSON: %v", err)
	}
	if data.LabelColumn != st.Input.LabelColumn {
		t.Errorf("label column: got %q want %q", data.LabelColumn, st.Input.LabelColumn)
	}
	seen := map[string]bool{}
	for _, id := range data.IDs {
		seen[id] = true
	}
	for _, id := range st.IDs {
		if !seen[id] {
			t.Errorf("id %q lost in the page's data", id)
			break
		}
	}
	for _, h := range hostile[:2] {
		if !strings.Contains(strings.Join(data.LabelNames, "\n"), h) {
			t.Errorf("label %q lost in the page's data", h)
		}
	}
	// Every SVG file is well-formed XML whose text holds the labels as
	// text, with no element beyond the drawing's own.
	svgs, _ := filepath.Glob(filepath.Join(dir, "figures", "*.svg"))
	for _, path := range svgs {
		b, _ := os.ReadFile(path)
		d := xml.NewDecoder(bytes.NewReader(b))
		var text strings.Builder
		for {
			tok, err := d.Token()
			if err == io.EOF {
				break
			}
			if err != nil {
				t.Fatalf("%s: %v", path, err)
			}
			switch tok := tok.(type) {
			case xml.StartElement:
				switch tok.Name.Local {
				case "svg", "title", "rect", "circle", "polyline", "text":
				default:
					t.Errorf("%s: unexpected element <%s>", filepath.Base(path), tok.Name.Local)
				}
				for _, a := range tok.Attr {
					if strings.HasPrefix(a.Name.Local, "on") {
						t.Errorf("%s: attribute %s", filepath.Base(path), a.Name.Local)
					}
				}
			case xml.CharData:
				text.Write(tok)
			}
		}
		if filepath.Base(path) == "layouts.svg" {
			// The legend may cut a long label with an ellipsis.
			for _, h := range hostile[:2] {
				if !strings.Contains(text.String(), h[:18]) {
					t.Errorf("layouts.svg legend lacks %q as text", h[:18])
				}
			}
		}
	}
}
