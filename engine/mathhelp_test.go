package engine_test

import "math"

func mathLog(x float64) float64 { return math.Log(x) }
func mathExp(x float64) float64 { return math.Exp(x) }
