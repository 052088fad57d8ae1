package main

import (
	"encoding/json"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The open-air cinema demo, worked by hand (common practice: EVPI = value with
// perfect information − value without).
// Without information: small −600 + 12(0.6·200 + 0.3·120) = 1,272; large
// −1,200 + 12(0.6·380 + 0.3·150) = 2,076; marquee −2,100 + 12(0.6·380 + 0.3·330 + 0.1·250) = 2,124.
// Knowing the weather first: dry → large 3,360; showers → marquee 1,860; storm → marquee 900;
// 0.6·3,360 + 0.3·1,860 + 0.1·900 = 2,664, so EVPI = 540.
func TestCinemaDemoValueOfInformationByHand(t *testing.T) {
	code, out, stderr := runCLI("voi", "../../assets/demos/open-air-cinema.ramify.json", "--json")
	require.Equal(t, exitOK, code, stderr)
	var doc struct {
		Without string
		Whole   struct {
			Valid bool
			With  string
			EVPI  string
		}
	}
	require.NoError(t, json.Unmarshal([]byte(out), &doc))
	assert.Equal(t, "2124", doc.Without)
	assert.True(t, doc.Whole.Valid)
	assert.Equal(t, "2664", doc.Whole.With)
	assert.Equal(t, "540", doc.Whole.EVPI)
}
