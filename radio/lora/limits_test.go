package lora_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/lora"
)

// TestAnnulusRadiusCap: issue 13. Radii above about 1e154 m overflowed the
// squared radii of the annulus law (NaN CDF and moments); radii are now
// capped at MaxRadius, named in the error. At the cap the law still has
// its closed-form mean 2R/3 for a disk (E r = ∫ r·2r/R² dr).
func TestAnnulusRadiusCap(t *testing.T) {
	for _, r := range []float64{1e155, 1e300, lora.MaxRadius * 1.01, math.Inf(1), math.NaN(), 0} {
		_, err := lora.NewDisk(r)
		require.ErrorIs(t, err, lora.ErrParam, "NewDisk(%g)", r)
		_, err = lora.NewAnnulus(0, r)
		require.ErrorIs(t, err, lora.ErrParam, "NewAnnulus(0, %g)", r)
	}
	_, err := lora.NewAnnulus(1e155, 2e155)
	require.ErrorIs(t, err, lora.ErrParam)
	assert.Contains(t, err.Error(), "MaxRadius")
	d, err := lora.NewDisk(lora.MaxRadius)
	require.NoError(t, err)
	assert.InEpsilon(t, 2*lora.MaxRadius/3, d.Mean(), 1e-14)
	assert.InDelta(t, 0.25, d.CDF(lora.MaxRadius/2), 1e-15)
}
