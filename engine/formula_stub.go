package engine

// cachedFormula is replaced by the compiled formula cache in formula.go.
type cachedFormula struct{}
