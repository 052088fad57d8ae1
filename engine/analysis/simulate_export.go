package analysis

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"strconv"
)

func simFloat(x float64) string { return strconv.FormatFloat(x, 'g', 10, 64) }

// WriteSimulationCSV writes a run as CSV: "summary" (one measure per row) or
// "samples" (the kept iterations, in order; invalid ones marked).
func WriteSimulationCSV(w io.Writer, s *SimResult, table string) error {
	cw := csv.NewWriter(w)
	switch table {
	case "summary":
		rows := [][]string{{"measure", "subject", "value"}}
		add := func(subject string, v Summary) {
			for _, m := range []struct {
				name string
				x    float64
			}{{"mean", v.Mean}, {"standard error", v.SE}, {"sd", v.SD}, {"min", v.Min}, {"p5", v.P5}, {"p10", v.P10},
				{"p50", v.P50}, {"p90", v.P90}, {"p95", v.P95}, {"max", v.Max}} {
				rows = append(rows, []string{m.name, subject, simFloat(m.x)})
			}
		}
		rows = append(rows,
			[]string{"mode", "", string(s.Mode)},
			[]string{"seed", "", strconv.FormatUint(s.Seed, 10)},
			[]string{"iterations requested", "", strconv.Itoa(s.N)},
			[]string{"iterations counted", "", strconv.Itoa(s.Value.Count)},
			[]string{"iterations invalid", "", strconv.Itoa(s.Invalid)},
			[]string{"base case", s.ValueWord, simFloat(s.Base)},
			[]string{"chance of loss", s.LossRule, simFloat(s.Loss)})
		add(s.ValueWord, s.Value)
		for _, a := range s.Alternatives {
			rows = append(rows, []string{"chance best", a.Label, simFloat(a.PBest)})
			add(a.Label, a.Value)
		}
		if err := cw.WriteAll(rows); err != nil {
			return err
		}
	case "samples":
		header := []string{"iteration", s.ValueWord}
		for _, a := range s.Alternatives {
			header = append(header, a.Label)
		}
		_ = cw.Write(header)
		for i, v := range s.Samples {
			row := []string{strconv.Itoa(i + 1), "invalid"}
			if !math.IsNaN(v) {
				row[1] = simFloat(v)
			}
			for _, a := range s.Alternatives {
				if math.IsNaN(a.Samples[i]) {
					row = append(row, "invalid")
				} else {
					row = append(row, simFloat(a.Samples[i]))
				}
			}
			_ = cw.Write(row)
		}
	default:
		return fmt.Errorf("CSV table %q is unknown (use summary or samples)", table)
	}
	cw.Flush()
	return cw.Error()
}
