package topologies

import (
	"bufio"
	"fmt"
	"io"
	"regexp"
	"strconv"
	"strings"
	"time"

	"hoplore/internal/yamlx"
	"hoplore/sim"
)

// WriteYAML writes g as a topology file that ParseFile reads back
// identically: every link states its bandwidth, delay and buffer.
func WriteYAML(w io.Writer, g *sim.Graph) error {
	bw := bufio.NewWriter(w)
	num := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	fmt.Fprintf(bw, "name: %s\n", yamlString(g.Name))
	fmt.Fprintln(bw, "nodes:")
	for _, n := range g.Nodes {
		var fields []string
		switch n.Coord {
		case sim.Plane:
			fields = append(fields, "x_km: "+num(n.X), "y_km: "+num(n.Y))
		case sim.Geo:
			fields = append(fields, "lat: "+num(n.Lat), "lon: "+num(n.Lon))
		}
		if n.Processing != 0 {
			fields = append(fields, "processing: "+yamlDuration(n.Processing))
		}
		if len(fields) == 0 {
			fmt.Fprintf(bw, "  - %s\n", yamlString(n.Name))
			continue
		}
		fmt.Fprintf(bw, "  - {name: %s, %s}\n", yamlString(n.Name), strings.Join(fields, ", "))
	}
	if len(g.Links) == 0 {
		fmt.Fprintln(bw, "links: []")
	} else {
		fmt.Fprintln(bw, "links:")
	}
	for _, l := range g.Links {
		fmt.Fprintf(bw, "  - {a: %s, b: %s, bandwidth: %s, delay: %s, buffer: %d}\n",
			yamlString(g.Nodes[l.A].Name), yamlString(g.Nodes[l.B].Name), yamlBandwidth(l.Bandwidth), yamlDuration(l.Delay), l.Buffer)
	}
	return bw.Flush()
}

var plainName = regexp.MustCompile(`^[A-Za-z_][A-Za-z0-9_.-]*$`)

// yamlString writes s plain when that reads back as the same string, quoted
// otherwise.
func yamlString(s string) string {
	switch strings.ToLower(s) {
	case "true", "false", "yes", "no", "on", "off", "null", "y", "n":
		return strconv.Quote(s)
	}
	if plainName.MatchString(s) {
		return s
	}
	return strconv.Quote(s)
}

// yamlBandwidth writes bps in the largest SI unit that reads back exactly.
func yamlBandwidth(bps float64) string {
	for _, u := range []struct {
		suffix string
		mult   float64
	}{{"Gbps", 1e9}, {"Mbps", 1e6}, {"kbps", 1e3}} {
		s := strconv.FormatFloat(bps/u.mult, 'g', -1, 64) + u.suffix
		if v, err := yamlx.ParseBandwidth(s); err == nil && v == bps && bps >= u.mult && !strings.ContainsAny(s, "e") {
			return s
		}
	}
	return strconv.FormatFloat(bps, 'g', -1, 64)
}

func yamlDuration(t sim.Time) string {
	if t == 0 {
		return "0s"
	}
	return time.Duration(t).String()
}
