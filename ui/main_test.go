package ui

import (
	"os"
	"testing"

	"github.com/ramify-app/ramify/canvas"
)

func TestMain(m *testing.M) {
	runInBackground = func(f func()) { f() }
	canvas.RunInBackground = func(f func()) { f() }
	os.Exit(m.Run())
}
