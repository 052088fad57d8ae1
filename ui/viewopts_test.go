package ui

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/assets"
	"github.com/ramify-app/ramify/engine"
)

// The View menu's toggles reach the drawn tree through the editor's view options.
func TestViewTogglesReachTheCanvas(t *testing.T) {
	d, ok := assets.DemoByName("chiller-cover")
	require.True(t, ok)
	p, err := engine.Parse(d.Data, d.Name)
	require.NoError(t, err)
	e := newTestEditor(t, p)

	assert.True(t, e.ViewOptions().ShowCertaintyEquivalent, "certainty equivalents are shown whenever an attitude is set")
	toggleCertaintyEquivalents(e)
	assert.False(t, e.ViewOptions().ShowCertaintyEquivalent)

	require.Nil(t, e.ViewOptions().NoteFunc)
	toggleBreakEvenNotes(e)
	notes := e.ViewOptions().NoteFunc
	require.NotNil(t, notes)
	old := p.FindNode("old-chiller")
	got := strings.Join(notes(old, 0), " ")
	assert.Contains(t, got, "flips at", "the chance of the old chiller holding can change the plan")
	toggleBreakEvenNotes(e)
	assert.Nil(t, e.ViewOptions().NoteFunc)
}
