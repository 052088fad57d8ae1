package ui

import (
	"os"
	"testing"
)

func TestMain(m *testing.M) {
	runInBackground = func(f func()) { f() }
	os.Exit(m.Run())
}
