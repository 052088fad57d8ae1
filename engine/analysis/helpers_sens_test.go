package analysis

import "github.com/shopspring/decimal"

func d(s string) decimal.Decimal { return decimal.RequireFromString(s) }
