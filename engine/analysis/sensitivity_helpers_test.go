package analysis

import "github.com/shopspring/decimal"

func sdec(s string) decimal.Decimal { return decimal.RequireFromString(s) }
