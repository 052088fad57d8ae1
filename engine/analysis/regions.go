package analysis

import (
	"context"
	"fmt"
	"io"
	"runtime"
	"sync"

	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
)

// DefaultGrid is the number of points along each axis of a two-way map.
const DefaultGrid = 50

// RegionOptions shape a two-way map.
type RegionOptions struct {
	XRange, YRange *Range // nil: each input's own range
	Decision       string // id of the decision compared; "" for the root
	Steps          int    // points along each axis; 0 means DefaultGrid
	Workers        int    // goroutines; 0 means GOMAXPROCS
	// Progress, when set, is called after each row with the rows done and the
	// total, always from the goroutine that called Regions.
	Progress func(done, total int)
}

// RegionMap says which alternative is best in each cell of a grid over two inputs.
type RegionMap struct {
	X, Y         *Setting
	XName, YName string
	Xs, Ys       []decimal.Decimal // grid values along each axis, low to high
	Best         [][]int           // Best[iy][ix]
	Decision     *engine.Node
	Alternatives []string
	BaseBest     int // best alternative at the base case (exact)
	ValueWord    string
	Unit         string
}

// Regions maps the best alternative at a decision over a grid of two inputs,
// using the float evaluator on several goroutines. The base case's winner is
// taken from the exact evaluation. p is evaluated here: pass a private clone when
// other goroutines use it. Cancelling ctx stops the work and returns ctx's error.
func Regions(ctx context.Context, p *engine.Project, r *engine.Result, x, y Input, o RegionOptions) (*RegionMap, error) {
	steps := o.Steps
	if steps == 0 {
		steps = DefaultGrid
	}
	if steps < 2 || steps > 2000 {
		return nil, fmt.Errorf("steps: %d is not between 2 and 2000", steps)
	}
	if x == y {
		return nil, fmt.Errorf("the two inputs are both %s; choose two different inputs", x)
	}
	sx, err := Prepare(p, r, x, o.XRange)
	if err != nil {
		return nil, err
	}
	sy, err := Prepare(p, r, y, o.YRange)
	if err != nil {
		return nil, err
	}
	if !x.IsVariable() && !y.IsVariable() && x.NodeID == y.NodeID && x.Field == FieldProbability && y.Field == FieldProbability {
		return nil, fmt.Errorf("node %q: two probabilities of one chance node cannot be varied against each other; vary one and let the rule adjust the rest", x.NodeID)
	}
	if x.IsVariable() && y.IsVariable() && x.Variable == y.Variable {
		return nil, fmt.Errorf("the two inputs are both variable %q", x.Variable)
	}
	dec, m, binds, err := compileBound(p, o.Decision, sx, sy)
	if err != nil {
		return nil, err
	}
	bx, by := binds[0], binds[1]
	res := &RegionMap{X: sx, Y: sy, XName: sx.Name(p), YName: sy.Name(p),
		Xs: gridPoints(sx.Low, sx.High, steps-1), Ys: gridPoints(sy.Low, sy.High, steps-1),
		Decision: dec, Alternatives: alternatives(dec), BaseBest: r.Choice(dec), ValueWord: r.ValueWord(), Unit: p.Currency}
	xs := make([]float64, steps)
	ys := make([]float64, steps)
	for i := range xs {
		xs[i], ys[i] = res.Xs[i].InexactFloat64(), res.Ys[i].InexactFloat64()
	}
	res.Best = make([][]int, steps)

	workers := o.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	if workers > steps {
		workers = steps
	}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	rows := make(chan int)
	type rowDone struct {
		iy  int
		err error
	}
	done := make(chan rowDone)
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func(mm *engine.FastModel) {
			defer wg.Done()
			for iy := range rows {
				row := make([]int, steps)
				var rowErr error
				by.set(mm, ys[iy])
				for ix := range xs {
					bx.set(mm, xs[ix])
					if err := mm.Roll(); err != nil {
						rowErr = fmt.Errorf("at %s = %s, %s = %s: %w", sx.Input, res.Xs[ix], sy.Input, res.Ys[iy], err)
						break
					}
					row[ix] = mm.ChoiceOf(dec)
				}
				res.Best[iy] = row
				select {
				case done <- rowDone{iy, rowErr}:
				case <-ctx.Done():
					return
				}
			}
		}(m.Clone())
	}
	go func() {
		defer close(rows)
		for iy := 0; iy < steps; iy++ {
			select {
			case rows <- iy:
			case <-ctx.Done():
				return
			}
		}
	}()
	var firstErr error
	for finished := 0; finished < steps; finished++ {
		var d rowDone
		select {
		case d = <-done:
		case <-ctx.Done():
			firstErr = ctx.Err()
		}
		if firstErr == nil && d.err != nil {
			firstErr = d.err
		}
		if firstErr != nil {
			break
		}
		if o.Progress != nil {
			o.Progress(finished+1, steps)
		}
	}
	cancel()
	wg.Wait()
	if firstErr != nil {
		return nil, firstErr
	}
	return res, nil
}

// Boundary lists the grid edges between cells with different winners, as
// segments in input coordinates: the break-even boundary, drawn half-way
// between cell centres.
func (rm *RegionMap) Boundary() [][4]float64 {
	var segs [][4]float64
	n := len(rm.Xs)
	xs := make([]float64, n)
	ys := make([]float64, len(rm.Ys))
	for i := range xs {
		xs[i] = rm.Xs[i].InexactFloat64()
	}
	for i := range ys {
		ys[i] = rm.Ys[i].InexactFloat64()
	}
	edge := func(v []float64, i int, lower bool) float64 {
		// cell i spans half-way to its neighbours, clamped at the ends
		if lower {
			if i == 0 {
				return v[0]
			}
			return (v[i-1] + v[i]) / 2
		}
		if i == len(v)-1 {
			return v[i]
		}
		return (v[i] + v[i+1]) / 2
	}
	for iy := range rm.Best {
		for ix := range rm.Best[iy] {
			w := rm.Best[iy][ix]
			if ix+1 < n && rm.Best[iy][ix+1] != w {
				xm := edge(xs, ix, false)
				segs = append(segs, [4]float64{xm, edge(ys, iy, true), xm, edge(ys, iy, false)})
			}
			if iy+1 < len(rm.Best) && rm.Best[iy+1][ix] != w {
				ym := edge(ys, iy, false)
				segs = append(segs, [4]float64{edge(xs, ix, true), ym, edge(xs, ix, false), ym})
			}
		}
	}
	return segs
}

// WriteCSV writes the map as a table: one row per y value, one column per x value, the best alternative in each cell.
func (rm *RegionMap) WriteCSV(w io.Writer) error {
	head := []string{rm.YName + " \\ " + rm.XName}
	for _, x := range rm.Xs {
		head = append(head, x.String())
	}
	rows := [][]string{head}
	for iy, y := range rm.Ys {
		row := []string{y.String()}
		for _, b := range rm.Best[iy] {
			row = append(row, rm.Alternatives[b])
		}
		rows = append(rows, row)
	}
	return writeRows(w, rows)
}

// RegionDoc is the JSON form of a two-way map.
type RegionDoc struct {
	X            string     `json:"x"`
	Y            string     `json:"y"`
	Decision     string     `json:"decision"`
	Alternatives []string   `json:"alternatives"`
	Xs           []string   `json:"xValues"`
	Ys           []string   `json:"yValues"`
	Best         [][]int    `json:"best"` // [y][x] index into alternatives
	Base         [2]string  `json:"base"`
	BaseBest     string     `json:"baseBest"`
	Shares       []ShareDoc `json:"shares"`
	Caution      string     `json:"caution"`
}

type ShareDoc struct {
	Alternative string  `json:"alternative"`
	Cells       int     `json:"cells"`
	Share       float64 `json:"share"`
}

// Shares counts the cells each alternative wins.
func (rm *RegionMap) Shares() []int {
	out := make([]int, len(rm.Alternatives))
	for _, row := range rm.Best {
		for _, b := range row {
			out[b]++
		}
	}
	return out
}

// Doc builds the JSON document `ramify regions --json` prints.
func (rm *RegionMap) Doc() RegionDoc {
	d := RegionDoc{X: rm.XName, Y: rm.YName, Decision: rm.Decision.ID, Alternatives: rm.Alternatives, Best: rm.Best,
		Base: [2]string{rm.X.Base.String(), rm.Y.Base.String()}, BaseBest: rm.Alternatives[rm.BaseBest], Caution: engine.Caution}
	for _, x := range rm.Xs {
		d.Xs = append(d.Xs, x.String())
	}
	for _, y := range rm.Ys {
		d.Ys = append(d.Ys, y.String())
	}
	total := len(rm.Xs) * len(rm.Ys)
	for i, c := range rm.Shares() {
		d.Shares = append(d.Shares, ShareDoc{Alternative: rm.Alternatives[i], Cells: c, Share: float64(c) / float64(total)})
	}
	return d
}
