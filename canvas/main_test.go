package canvas

import (
	"os"
	"testing"
)

func TestMain(m *testing.M) {
	RunInBackground = func(f func()) { f() }
	os.Exit(m.Run())
}
