package main

import (
	"encoding/csv"
	"html"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// crewJargon matches the statistician's terms a maintenance crew should
// not have to read to act on a finding, a note or a warning (review rv18a,
// finding 6): they may stand in a closing parenthesis for a specialist,
// not as the lead words. AIC and BIC as whole words, in capitals; "dof"
// and "sigma" when used bare, not in "one-sigma" or a flag or field name
// such as --ground-sigma.
var crewJargon = regexp.MustCompile(`(?i:chi-square|chi2|χ²|criterion|dipole|autocorrelation|lag-1|degrees? of freedom|(?:^|[^-_\w])dof\b|(?:^|[^-_\w])sigmas?\b)|\bAIC\b|\bBIC\b`)

// TestCrewFindingsPlainWords runs the demo and checks that what the crew
// reads of it names no statistics outside parentheses: report.html's
// visible text (the summary, the findings table with each finding's
// values line, the table of groups and its notes, the run's warnings and
// notes), the messages of findings.csv, and all the terminal prints. The demo holds the findings whose
// wording this is about (a buried steel object at T07, fits that miss
// their readings by more than the noise at T19 and T24), so the test
// also checks they are there and that the specialist's numbers are kept
// in parentheses: it fails if a finding went missing rather than its
// jargon.
func TestCrewFindingsPlainWords(t *testing.T) {
	if testing.Short() {
		t.Skip("the demo simulates 155,000 readings")
	}
	dir := filepath.Join(t.TempDir(), "demo")
	out := mustCLI(t, "demo", "-o", dir)
	check := func(where, text string) {
		t.Helper()
		if m := crewJargon.FindString(ingesttest.OutsideParentheses(text)); m != "" {
			t.Errorf("%s says %q outside parentheses:\n%s", where, m, text)
		}
	}

	// findings.csv: every message.
	f, err := os.Open(filepath.Join(dir, "findings.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil || len(rows) < 2 {
		t.Fatalf("findings.csv: %d rows, %v", len(rows), err)
	}
	col := map[string]int{}
	for i, name := range rows[0] {
		col[strings.TrimPrefix(name, "\ufeff")] = i
	}
	msg, kind := col["message"], col["kind"]
	var object, poor string
	for _, r := range rows[1:] {
		check("findings.csv", r[msg])
		switch {
		case r[kind] == "dipole-anomaly" && strings.Contains(r[msg], "T07"):
			object = r[msg]
		case r[kind] == "poor-fit" && strings.Contains(r[msg], "T19"):
			poor = r[msg]
		}
	}
	// The kind stays "dipole-anomaly" for scripts; the message says what
	// it is in the crew's words and keeps the fitted model's name and
	// the criterion's evidence in its closing parenthesis.
	if !strings.Contains(object, "magnetised object") || !strings.Contains(object, "(fitted as a point dipole; information criterion lower by ") {
		t.Errorf("findings.csv: the object at T07 reads %q", object)
	}
	if !regexp.MustCompile(`by [0-9.]+ times the noise, more than the 2 times allowed, .*\(reduced chi-square [0-9.e+]+, limit 4\)`).MatchString(poor) {
		t.Errorf("findings.csv: the poor fit at T19 reads %q", poor)
	}

	// report.html: all visible text, plots and styles aside.
	data, err := os.ReadFile(filepath.Join(dir, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	page := regexp.MustCompile(`(?s)<svg.*?</svg>|<style.*?</style>|<script.*?</script>`).ReplaceAllString(string(data), "")
	findingRows := 0
	for _, row := range regexp.MustCompile(`(?s)<tr>.*?</tr>`).FindAllString(page, -1) {
		text := html.UnescapeString(regexp.MustCompile(`<[^>]+>`).ReplaceAllString(row, " "))
		if strings.Contains(row, `class="detail"`) {
			findingRows++
		}
		check("a row of report.html", text)
	}
	for _, line := range strings.Split(html.UnescapeString(regexp.MustCompile(`<[^>]+>`).ReplaceAllString(page, "\n")), "\n") {
		check("report.html", line)
	}
	if findingRows < 5 || !strings.Contains(page, "<td>magnetised object</td>") {
		t.Errorf("report.html: %d findings rows, the object's kind as the crew reads it %v", findingRows, strings.Contains(page, "<td>magnetised object</td>"))
	}

	// The group notes report.html lists under the table of groups: the
	// demo's fits at T11, T13, T15 and T20 find that three lines fit the
	// readings better than two without resolving every current; the
	// information criterion's fall stays in the note's parenthesis.
	if !regexp.MustCompile(`3 lines fit the readings better, but not every current is resolved \(information criterion lower by [0-9.e+]+; `).MatchString(page) {
		t.Error("report.html: no group note that three lines fit the readings better, with the criterion's evidence in parentheses")
	}

	// All the terminal prints: the header, the findings, the cautions and
	// the command to run the fit again.
	_, list, ok := strings.Cut(out, "findings (")
	if !ok || !strings.Contains(list, "T07") {
		t.Fatalf("the demo printed no findings:\n%s", out)
	}
	for _, line := range strings.Split(out, "\n") {
		check("the terminal", line)
	}
}
