package report

import (
	"bytes"
	"fmt"
	"html"
	"strings"

	"plumb/cmd/plumb/internal/studyview"
	"plumb/stability"
)

const css = `body{font-family:sans-serif;color:#222;max-width:1100px;margin:1.5em auto;padding:0 1em;line-height:1.45}
h1{font-size:1.6em;margin-bottom:.2em}h2{margin-top:1.6em;border-bottom:1px solid #ccc;padding-bottom:.2em}
.meta{color:#555}.pick{background:#f3f6fb;border-left:4px solid #1b4f9c;padding:.6em 1em}
.cautions{background:#fff8e6;border-left:4px solid #e69500;padding:.4em 1em}
.wide{overflow-x:auto}table{border-collapse:collapse;font-size:.8em;margin:.6em 0}td{white-space:nowrap}th,td{border:1px solid #ccc;padding:.25em .4em;text-align:right}
th{background:#eee;cursor:pointer;vertical-align:bottom;max-width:7em}td.l,th.l{text-align:left}tr.chosen td{background:#e8eef8;font-weight:bold}
figure{margin:1.2em 0}figure svg{max-width:100%;height:auto}figcaption{color:#444;font-size:.9em;max-width:900px}
.methods{background:#f7f7f7;padding:.6em 1em;border:1px solid #ddd}code{font-size:.9em}`

const sortJS = `(function(){
  var tables = document.querySelectorAll('table.sortable');
  for (var t = 0; t < tables.length; t++) {
    (function(table){
      var heads = table.querySelectorAll('th');
      for (var i = 0; i < heads.length; i++) {
        (function(col, th){
          th.addEventListener('click', function(){
            var body = table.tBodies[0];
            var rows = Array.prototype.slice.call(body.rows);
            var asc = th.getAttribute('data-dir') !== 'asc';
            for (var k = 0; k < heads.length; k++) { heads[k].removeAttribute('data-dir'); }
            th.setAttribute('data-dir', asc ? 'asc' : 'desc');
            rows.sort(function(a, b){
              var x = a.cells[col].getAttribute('data-v'), y = b.cells[col].getAttribute('data-v');
              var nx = parseFloat(x), ny = parseFloat(y);
              var r = (!isNaN(nx) && !isNaN(ny)) ? nx - ny : String(x).localeCompare(String(y));
              return asc ? r : -r;
            });
            for (var k = 0; k < rows.length; k++) { body.appendChild(rows[k]); }
          });
        })(i, heads[i]);
      }
    })(tables[t]);
  }
})();`

// page renders index.html.
func page(st *studyview.View, rec *Recommendation, recErr error, figs []*Figure, methods []string) []byte {
	var b bytes.Buffer
	h := html.EscapeString
	w := func(format string, a ...any) { fmt.Fprintf(&b, format, a...) }
	title := "t-SNE stability study"
	if st.Dir != "" {
		title += ": " + st.Dir
	}
	w("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\n")
	w("<title>%s</title>\n<link rel=\"icon\" href=\"data:,\"/>\n<style>%s</style>\n</head>\n<body>\n", h(title), css)
	w("<h1>%s</h1>\n", h(title))
	done, failed := 0, 0
	for _, r := range st.Runs {
		if r.Status == "done" {
			done++
		} else if r.Status == "failed" {
			failed++
		}
	}
	w("<p class=\"meta\">%s %s · n = %d points, d = %d features · %d settings × %d seeds · %d of %d runs finished",
		h(nonEmpty(st.Tool, "plumb")), h(st.Version), st.Input.N, st.Input.D, len(st.Settings), len(st.Seeds), done, len(st.Runs))
	if failed > 0 {
		w(", %d failed", failed)
	}
	w(" · study made %s</p>\n", h(nonEmpty(st.Created, "(time not recorded)")))

	w("<h2 id=\"recommendation\">Recommendation</h2>\n")
	if rec == nil {
		w("<p class=\"pick\">No recommendation: %s.</p>\n", h(strings.TrimPrefix(recErr.Error(), "report: ")))
	} else {
		s := st.Setting(rec.Chosen.ID)
		w("<div class=\"pick\"><p><strong>Recommended setting: %s</strong> (id <code>%s</code>).</p>\n", h(st.Label(s)), h(s.ID))
		w("<p>Median over %d seeds: trustworthiness %s, seed-to-seed disparity %s, kNN Jaccard %s, final KL %s; points unstable: %s.</p>\n",
			s.RunsDone, h(fmtMedianIQR(s.Trustworthiness)), h(fmtMedianIQR(s.Disparity)), h(fmtMedianIQR(s.Jaccard)), h(fmtMedianIQR(s.KL)), h(fmtShare(s)))
		if rec.RunnerUp != nil {
			ru := st.Setting(rec.RunnerUp.ID)
			w("<p>Runner-up: <strong>%s</strong>. Decided at the <em>%s</em> step: the runner-up was not chosen because %s.</p>\n", h(st.Label(ru)), h(stepWords[rec.DecidedBy]), h(rec.Why))
			w("<table><thead><tr><th class=\"l\">score</th><th>recommended</th><th>runner-up</th><th>recommended − runner-up</th></tr></thead><tbody>\n")
			for _, row := range []struct {
				name string
				a, b float64
			}{
				{"trustworthiness (higher is better)", rec.Chosen.Trustworthiness, rec.RunnerUp.Trustworthiness},
				{"disparity (lower is better)", rec.Chosen.Disparity, rec.RunnerUp.Disparity},
				{"kNN Jaccard (higher is better)", rec.Chosen.Jaccard, rec.RunnerUp.Jaccard},
				{"final KL (lower is better)", rec.Chosen.KL, rec.RunnerUp.KL},
			} {
				w("<tr><td class=\"l\">%s</td><td>%s</td><td>%s</td><td>%s</td></tr>\n", h(row.name), fmtScore(row.a), fmtScore(row.b), fmtScore(row.a-row.b))
			}
			w("</tbody></table>\n")
		} else {
			w("<p>Only one setting took part in the rule, so there is no runner-up.</p>\n")
		}
		if len(rec.Indistinguishable) > 0 {
			var names []string
			for _, id := range rec.Indistinguishable {
				names = append(names, h(st.Label(st.Setting(id))))
			}
			w("<p>Indistinguishable from the recommendation (within tolerance or overlapping spread on both trustworthiness and disparity): %s. Any of these is as defensible on these numbers.</p>\n", strings.Join(names, "; "))
		} else {
			w("<p>No other setting is indistinguishable from it on both trustworthiness and disparity.</p>\n")
		}
		w("</div>\n")
	}
	if same := seedless(st); len(same) > 0 {
		w("<p class=\"cautions\"><strong>Seeds made no difference</strong> for %s: every finished seed gave the same map, so their stability was <strong>not measured</strong>. With a deterministic start such as PCA initialisation on all points the seed changes nothing; sweep <code>--init random</code> or <code>--subsample 0.9</code> to measure it.</p>\n", h(strings.Join(same, "; ")))
	}
	w("<p><strong>The rule.</strong> %s</p>\n", h(rec0(rec).Words()))
	if rec != nil && len(rec.Excluded) > 0 {
		w("<p>Left out of the rule:</p><ul>\n")
		for _, e := range rec.Excluded {
			w("<li><code>%s</code>: %s</li>\n", h(e.ID), h(e.Reason))
		}
		w("</ul>\n")
	}

	w("<h2 id=\"cautions\">Reading these maps</h2>\n<div class=\"cautions\"><ul>\n")
	for _, c := range Cautions {
		w("<li>%s</li>\n", h(c))
	}
	w("</ul><p>After Wattenberg, Viégas &amp; Johnson, “How to Use t-SNE Effectively”, Distill, 2016.</p></div>\n")

	w("<h2 id=\"figures\">Figures</h2>\n")
	for _, f := range figs {
		w("<figure id=\"fig-%s\">\n", h(f.Name))
		b.Write(f.SVG)
		w("<figcaption>%s Files: <a href=\"figures/%s.svg\">SVG</a>, <a href=\"figures/%s.png\">PNG</a>.</figcaption>\n</figure>\n", h(f.Caption), h(f.Name), h(f.Name))
	}

	w("<h2 id=\"settings\">Settings</h2>\n<p>Click a column heading to sort. Scores are medians across seeds (or pairs of seeds) with the interquartile range in brackets. Faithfulness to the input: trustworthiness, continuity, kNN recall, distance Spearman (input vs map distances), label accuracy and purity (with labels). Agreement between seeds: disparity (lower is better), kNN Jaccard and seed distance Spearman (higher is better).</p>\n")
	settingsTable(&b, st, rec)

	if failed > 0 {
		w("<h2 id=\"failed\">Failed runs</h2>\n<ul>\n")
		for _, r := range st.Runs {
			if r.Status == "failed" {
				w("<li><code>%s</code> (setting <code>%s</code>, seed %d): %s</li>\n", h(r.ID), h(r.SettingID), r.Seed, h(r.Error))
			}
		}
		w("</ul>\n")
	}

	w("<h2 id=\"methods\">Methods</h2>\n<div class=\"methods\">\n")
	for _, p := range methods {
		w("<p>%s</p>\n", h(p))
	}
	w("</div>\n<p>The same text is in <a href=\"methods.md\">methods.md</a>, ready to paste and edit.</p>\n")
	w("<h3>References</h3>\n<ul>\n")
	for _, r := range references {
		w("<li>%s</li>\n", h(r))
	}
	w("</ul>\n<p class=\"meta\">Input fingerprint <code>%s</code> · plan hash <code>%s</code></p>\n", h(nonEmpty(st.Input.Fingerprint, "not recorded")), h(nonEmpty(st.PlanHash, "not recorded")))
	w("<script>%s</script>\n</body>\n</html>\n", sortJS)
	return b.Bytes()
}

func rec0(r *Recommendation) Rule {
	if r == nil {
		return Rule{}
	}
	return r.Rule
}

func settingsTable(b *bytes.Buffer, st *studyview.View, rec *Recommendation) {
	h := html.EscapeString
	varied := st.Varied()
	cols := []struct {
		name string
		get  func(*studyview.Setting) stability.MedianIQR
	}{
		{"trustworthiness", func(s *studyview.Setting) stability.MedianIQR { return s.Trustworthiness }},
		{"continuity", func(s *studyview.Setting) stability.MedianIQR { return s.Continuity }},
		{"kNN recall", func(s *studyview.Setting) stability.MedianIQR { return s.KNNRecall }},
		{"distance Spearman", func(s *studyview.Setting) stability.MedianIQR { return s.DistanceSpearman }},
		{"label accuracy", func(s *studyview.Setting) stability.MedianIQR { return s.LabelAccuracy }},
		{"label purity", func(s *studyview.Setting) stability.MedianIQR { return s.LabelPurity }},
		{"disparity", func(s *studyview.Setting) stability.MedianIQR { return s.Disparity }},
		{"kNN Jaccard", func(s *studyview.Setting) stability.MedianIQR { return s.Jaccard }},
		{"seed distance Spearman", func(s *studyview.Setting) stability.MedianIQR { return s.PairSpearman }},
		{"final KL", func(s *studyview.Setting) stability.MedianIQR { return s.KL }},
	}
	// Leave out score columns with no value anywhere (e.g. label accuracy
	// without labels).
	var keep []int
	for ci, c := range cols {
		for i := range st.Settings {
			if finite(c.get(&st.Settings[i]).Median) {
				keep = append(keep, ci)
				break
			}
		}
	}
	rank := map[string]int{}
	if rec != nil {
		for i, id := range rec.Ranking {
			rank[id] = i + 1
		}
	}
	fmt.Fprintf(b, "<div class=\"wide\"><table class=\"sortable\" id=\"settings-table\"><thead><tr><th>#</th><th class=\"l\">setting id</th>")
	for _, p := range varied {
		fmt.Fprintf(b, "<th class=\"l\">%s</th>", h(p.Name))
	}
	b.WriteString("<th>runs</th>")
	for _, ci := range keep {
		fmt.Fprintf(b, "<th>%s</th>", h(cols[ci].name))
	}
	b.WriteString("<th>unstable %</th><th>rule rank</th></tr></thead>\n<tbody>\n")
	for i := range st.Settings {
		s := &st.Settings[i]
		cls := ""
		if rec != nil && rec.Chosen.ID == s.ID {
			cls = " class=\"chosen\""
		}
		fmt.Fprintf(b, "<tr%s><td data-v=\"%d\">%d</td><td class=\"l\" data-v=\"%s\"><code>%s</code></td>", cls, i+1, i+1, h(s.ID), h(s.ID))
		for _, p := range varied {
			v := s.Param(p.Name)
			fmt.Fprintf(b, "<td class=\"l\" data-v=\"%s\">%s</td>", h(v), h(v))
		}
		fmt.Fprintf(b, "<td data-v=\"%d\">%d/%d</td>", s.RunsDone, s.RunsDone, s.Runs)
		for _, ci := range keep {
			v := cols[ci].get(s)
			dv := "NaN"
			if finite(v.Median) {
				dv = fmt.Sprintf("%g", v.Median)
			}
			txt := "–"
			if finite(v.Median) {
				txt = fmtScore(v.Median) + "<br/><small>(" + fmtScore(v.IQR) + ")</small>"
			} else if s.NotMeasured != "" && s.Varied == "" && (cols[ci].name == "disparity" || cols[ci].name == "kNN Jaccard" || cols[ci].name == "seed distance Spearman") {
				txt = "<small>not measured</small>"
			}
			fmt.Fprintf(b, "<td data-v=\"%s\">%s</td>", dv, txt)
		}
		if finite(s.UnstableShare) {
			fmt.Fprintf(b, "<td data-v=\"%g\">%.1f</td>", s.UnstableShare, 100*s.UnstableShare)
		} else {
			b.WriteString("<td data-v=\"NaN\"><small>not measured</small></td>")
		}
		if r, ok := rank[s.ID]; ok {
			fmt.Fprintf(b, "<td data-v=\"%d\">%d</td>", r, r)
		} else {
			b.WriteString("<td data-v=\"9999\">–</td>")
		}
		b.WriteString("</tr>\n")
	}
	b.WriteString("</tbody></table></div>\n")
}

// stepWords names the steps of the rule for the page.
var stepWords = map[string]string{
	"trustworthiness": "faithfulness (trustworthiness)",
	"disparity":       "stability (disparity)",
	"jaccard":         "stability (kNN Jaccard)",
	"kl":              "KL divergence",
	"order":           "id order (exact tie)",
}

// seedless lists the settings whose seeds all gave the same map.
func seedless(st *studyview.View) []string {
	var out []string
	for i := range st.Settings {
		s := &st.Settings[i]
		if s.RunsDone >= 2 && (s.Disparity.Median == 0 && s.Disparity.IQR == 0 || s.NotMeasured != "" && s.Varied == "") {
			out = append(out, st.Label(s))
		}
	}
	return out
}
