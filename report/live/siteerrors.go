package live

import (
	"bytes"
	"errors"
	"fmt"
	"regexp"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"

	"undercurrent/inverse/simulate"
)

// decodeErrRE matches the TOML decoder's errors for a value that does not
// fit its destination: "toml: line N (last key "a.b"): MESSAGE".
var decodeErrRE = regexp.MustCompile(`^toml: line (\d+) \(last key "([^"]*)"\): (.*)$`)

// decodeError words an error of the TOML decoder for the site file name
// as "NAME:LINE:COL: key KEY = VALUE: REASON" (a value refused by its own
// check, as a duration, keeps that check's message, which quotes it). The
// decoder reports a value
// that does not fit (a bad duration, an array of the wrong length, a
// string for a number) at the LAST key of that name in the file, not at
// the failing one: with two [[asset]] tables the line pointed at held a
// valid value and the bad one, in the first asset, stayed. So each line
// giving that key is decoded on its own, in file order, under the table
// headers it belongs to, and the first that fails is the one reported.
// A line that cannot be found so (a value over several lines, a dotted
// key, an inline table) leaves the decoder's own position. Syntax errors
// (a ParseError that no single line reproduces) keep the decoder's
// position, which is right for them.
func decodeError(name string, data []byte, err error) error {
	var pe toml.ParseError
	var key, msg string
	line, col := 0, 0
	switch {
	case errors.As(err, &pe):
		key, msg, line, col = pe.LastKey, pe.Message, pe.Position.Line, pe.Position.Col
	default:
		m := decodeErrRE.FindStringSubmatch(err.Error())
		if m == nil {
			return fmt.Errorf("live: %s: %w", name, err)
		}
		line, _ = strconv.Atoi(m[1])
		key, msg, col = m[2], m[3], 1
	}
	owner := startOwner(key, data)
	if key != "" {
		if occ, found := failingKey(data, key); found {
			if occ.parse {
				// A value's own check (a duration, a start): its
				// message names the value already.
				return fmt.Errorf("live: %s:%d:%d: %s%s", name, occ.line, occ.col, owner, occ.msg)
			}
			return fmt.Errorf("live: %s:%d:%d: %skey %s = %s: %s", name, occ.line, occ.col, owner, key, occ.value, simulate.TOMLWords(occ.msg))
		}
	}
	if pe.Message != "" {
		return fmt.Errorf("live: %s:%d:%d: %s%s", name, line, col, owner, pe.Message)
	}
	return fmt.Errorf("live: %s:%d:%d: %skey %s: %s", name, line, col, owner, key, simulate.TOMLWords(msg))
}

// keyUse is one line of a site file giving a key: its 1-based line, the
// column of its value, the value's text, and the decoder's message for
// it alone.
type keyUse struct {
	line, col int
	value     string
	msg       string
	parse     bool // msg is the value's own check's (a toml.ParseError)
}

// failingKey finds the first line of data, in file order, giving the
// dotted key (table path and key, as "asset.sensor.position") whose value
// alone, under the headers of the tables it is in, the decoder refuses
// for a Site. It understands the layout site files use: one key per line
// and tables introduced by [name] or [[name]] headers.
func failingKey(data []byte, dotted string) (keyUse, bool) {
	table, key := "", dotted
	if i := strings.LastIndex(dotted, "."); i >= 0 {
		table, key = dotted[:i], dotted[i+1:]
	}
	headers := map[string]string{} // table name -> its latest header line
	cur := ""
	for n, raw := range bytes.Split(data, []byte("\n")) {
		s := strings.TrimSpace(string(raw))
		if strings.HasPrefix(s, "[") {
			h := strings.TrimSpace(strings.SplitN(s, "#", 2)[0])
			cur = strings.Trim(h, "[] \t")
			for t := range headers {
				if strings.HasPrefix(t, cur+".") {
					delete(headers, t)
				}
			}
			headers[cur] = h
			continue
		}
		if cur != table {
			continue
		}
		eq := strings.Index(s, "=")
		if eq < 0 || strings.HasPrefix(s, "#") || strings.Trim(strings.TrimSpace(s[:eq]), `"'`) != key {
			continue
		}
		var mini strings.Builder
		if table != "" {
			parts := strings.Split(table, ".")
			for i := range parts {
				if h, ok := headers[strings.Join(parts[:i+1], ".")]; ok {
					mini.WriteString(h + "\n")
				}
			}
		}
		mini.WriteString(s + "\n")
		var generic map[string]any
		if _, err := toml.Decode(mini.String(), &generic); err != nil {
			continue // not whole on this line: the decoder's position stands
		}
		var site Site
		_, err := toml.Decode(mini.String(), &site)
		if err == nil {
			continue
		}
		msg := err.Error()
		var pe toml.ParseError
		parse := errors.As(err, &pe)
		if parse {
			msg = pe.Message
		} else if m := decodeErrRE.FindStringSubmatch(msg); m != nil {
			msg = m[3]
		}
		c := strings.Index(string(raw), "=") + 1
		for c < len(raw) && (raw[c] == ' ' || raw[c] == '\t') {
			c++
		}
		value := strings.TrimSpace(strings.SplitN(strings.TrimSpace(s[eq+1:]), " #", 2)[0])
		return keyUse{line: n + 1, col: c + 1, value: value, msg: msg, parse: parse}, true
	}
	return keyUse{}, false
}

// tableKey returns the 1-based line and the column of the value of key
// in the index-th (0-based) table under header ("[[asset.sensor]]",
// "[broker]") of the site file text, 0, 0 when it is not there on a line
// of its own.
func tableKey(data []byte, header string, index int, key string) (line, col int) {
	seen, in := -1, false
	for n, raw := range bytes.Split(data, []byte("\n")) {
		s := strings.TrimSpace(string(raw))
		if strings.HasPrefix(s, "[") {
			h := strings.TrimSpace(strings.SplitN(s, "#", 2)[0])
			in = h == header
			if in {
				seen++
			}
			continue
		}
		if !in || seen != index {
			continue
		}
		eq := strings.Index(s, "=")
		if eq < 0 || strings.HasPrefix(s, "#") || strings.Trim(strings.TrimSpace(s[:eq]), `"'`) != key {
			continue
		}
		c := strings.Index(string(raw), "=") + 1
		for c < len(raw) && (raw[c] == ' ' || raw[c] == '\t') {
			c++
		}
		return n + 1, c + 1
	}
	return 0, 0
}

// assetKey returns the 1-based line and the column of the value of the
// first of keys found in one table of the asset-th (0-based) [[asset]] of
// the site file text: the asset table itself when sub is "", else the
// index-th (0-based, counted within that asset) table of [[asset.SUB]]
// headers, or the [asset.SUB] table (index 0). A key of a sub-table
// written dotted in the asset table ("alarms.step = 1") is found too.
// When none of keys is on a line of its own there (an absent key, a
// value over several lines, an inline table), it returns the line of the
// table's header (or, for a sub-table with no header of its own, the
// asset's) and column 1, so that a refusal still names where the table
// is; 0, 0 when the asset is not found.
func assetKey(data []byte, asset int, sub string, index int, keys ...string) (line, col int) {
	want := "asset"
	if sub != "" {
		want += "." + sub
	}
	type at struct{ line, col int }
	found := map[string]at{}
	assetN, headerLine, assetLine := -1, 0, 0
	counts := map[string]int{} // header name -> its tables seen in this asset
	cur, in := "", false
	for n, raw := range bytes.Split(data, []byte("\n")) {
		s := strings.TrimSpace(string(raw))
		if strings.HasPrefix(s, "[") {
			h := strings.TrimSpace(strings.SplitN(s, "#", 2)[0])
			array := strings.HasPrefix(h, "[[")
			cur = strings.ReplaceAll(strings.Trim(h, "[] \t"), " ", "")
			switch {
			case cur == "asset" && array:
				assetN++
				clear(counts)
				if assetN == asset {
					assetLine = n + 1
				}
			case strings.HasPrefix(cur, "asset."):
				counts[cur]++
			}
			in = assetN == asset && cur == want && (sub == "" || counts[cur]-1 == index)
			if in {
				headerLine = n + 1
			}
			continue
		}
		if assetN != asset {
			continue
		}
		prefix := ""
		if !in {
			// A sub-table's key written dotted in the asset table.
			if sub == "" || index != 0 || cur != "asset" {
				continue
			}
			prefix = sub + "."
		}
		eq := strings.Index(s, "=")
		if eq < 0 || strings.HasPrefix(s, "#") {
			continue
		}
		k := strings.ReplaceAll(strings.Trim(strings.TrimSpace(s[:eq]), `"'`), " ", "")
		if !strings.HasPrefix(k, prefix) {
			continue
		}
		k = k[len(prefix):]
		if _, ok := found[k]; ok {
			continue
		}
		c := strings.Index(string(raw), "=") + 1
		for c < len(raw) && (raw[c] == ' ' || raw[c] == '\t') {
			c++
		}
		found[k] = at{n + 1, c + 1}
	}
	for _, k := range keys {
		if p, ok := found[k]; ok {
			return p.line, p.col
		}
	}
	if headerLine == 0 {
		headerLine = assetLine // a sub-table given inline or dotted
	}
	if headerLine > 0 {
		return headerLine, 1
	}
	return 0, 0
}
