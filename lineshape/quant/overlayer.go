package quant

import (
	"fmt"
	"math"
)

// StrohmeierMethod names the overlayer model in results.
const StrohmeierMethod = "Strohmeier, Surf. Interface Anal. 15 (1990) 51"

// Overlayer describes a flat, uniform overlayer (typically an oxide) on a
// substrate of the same element (typically the metal), for the thickness
// equation of Strohmeier (Surf. Interface Anal. 15 (1990) 51):
//
//	d = L_ox sin(theta) ln[1 + (I_ox / I_m) / k],  k = N_ox L_ox / (N_m L_m)
//
// with I_ox / I_m the measured intensity ratio, N the atomic densities of
// the element, L the IMFPs (or attenuation lengths) at the transition
// energy, theta the take-off angle from the surface. The model neglects
// elastic scattering and assumes no contamination layer.
type Overlayer struct {
	NOverlayer, NSubstrate           float64 // atoms of the element per cm3
	LambdaOverlayer, LambdaSubstrate float64 // nm
	// TakeOffDeg is the analyser take-off angle in degrees from the
	// surface plane. If TakeOffDeg is 0 it defaults to 90 (normal exit).
	TakeOffDeg float64
	// SensitivityRatio is k = I∞_ox / I∞_m, the ratio of the pure-standard
	// intensities. If it is 0 it defaults to N_ox L_ox / (N_m L_m), the
	// model's estimate. When the ratio passed to the thickness methods is a
	// ratio of fit coefficients against pure standards recorded at their
	// own intensity scale, set it to 1: the standards already carry N L.
	SensitivityRatio float64
}

// Thickness is an overlayer thickness with its uncertainty.
type Thickness struct {
	Thickness float64 // nm
	SD        float64 // nm, first-order propagation; NaN if not known
	Ratio     float64 // I_ox / I_m used
	RatioSD   float64
	K         float64 // sensitivity ratio k used
	TakeOff   float64 // degrees from the surface
	// InformationDepth is 3 L_ox sin(theta) in nm: the substrate signal
	// from below a film this thick is 5 % of the bare substrate's.
	InformationDepth float64
	Method           string
	Warnings         []string
}

// OverlayerError says why the overlayer model gives no thickness for the
// data: no substrate signal (the film is thicker than the information
// depth, or the sample is not a film on that substrate) or a negative
// ratio.
type OverlayerError struct {
	Reason string
}

func (e *OverlayerError) Error() string { return "overlayer thickness: " + e.Reason }

// params returns the sensitivity ratio and the take-off angle after defaults, or
// an error for unusable parameters.
func (o Overlayer) params() (k, theta float64, err error) {
	theta = o.TakeOffDeg
	if theta == 0 {
		theta = 90
	}
	if !(theta > 0 && theta <= 90) {
		return 0, 0, fmt.Errorf("overlayer thickness: take-off angle %g degrees outside (0, 90]", o.TakeOffDeg)
	}
	if !(o.LambdaOverlayer > 0) || math.IsInf(o.LambdaOverlayer, 0) {
		return 0, 0, fmt.Errorf("overlayer thickness: overlayer IMFP %g nm must be positive", o.LambdaOverlayer)
	}
	k = o.SensitivityRatio
	if k == 0 {
		if !(o.NOverlayer > 0) || !(o.NSubstrate > 0) || !(o.LambdaSubstrate > 0) ||
			math.IsInf(o.NOverlayer, 0) || math.IsInf(o.NSubstrate, 0) || math.IsInf(o.LambdaSubstrate, 0) {
			return 0, 0, fmt.Errorf("overlayer thickness: atomic densities (%g, %g cm-3) and IMFPs (%g, %g nm) must be positive",
				o.NOverlayer, o.NSubstrate, o.LambdaOverlayer, o.LambdaSubstrate)
		}
		k = o.NOverlayer * o.LambdaOverlayer / (o.NSubstrate * o.LambdaSubstrate)
	}
	if !(k > 0) || math.IsInf(k, 0) {
		return 0, 0, fmt.Errorf("overlayer thickness: sensitivity ratio %g must be positive", k)
	}
	return k, theta, nil
}

// Thickness returns the overlayer thickness for the intensity ratio
// ratio = I_ox / I_m with standard deviation ratioSD (0 if unknown), by
// the Strohmeier equation. The uncertainty is first order:
// sd_d = L_ox sin(theta) sd_R / (k + R).
//
// A zero ratio (no overlayer signal) gives thickness 0 with a warning. An
// infinite ratio (no substrate signal) or a negative one gives an
// *OverlayerError. A thickness beyond the information depth
// 3 L_ox sin(theta) gets a warning: the substrate signal is then too weak
// for the model to be trusted.
func (o Overlayer) Thickness(ratio, ratioSD float64) (Thickness, error) {
	k, theta, err := o.params()
	if err != nil {
		return Thickness{}, err
	}
	if math.IsNaN(ratio) || math.IsNaN(ratioSD) || ratioSD < 0 {
		return Thickness{}, fmt.Errorf("overlayer thickness: ratio %g +/- %g is not a number", ratio, ratioSD)
	}
	if ratio < 0 {
		return Thickness{}, &OverlayerError{Reason: fmt.Sprintf("negative intensity ratio %g: the model needs nonnegative overlayer and positive substrate signals", ratio)}
	}
	if math.IsInf(ratio, 1) {
		return Thickness{}, &OverlayerError{Reason: "no substrate signal (overlayer only): the film is thicker than the information depth, or the substrate state is absent; no thickness can be given"}
	}
	ls := o.LambdaOverlayer * math.Sin(theta*math.Pi/180)
	t := Thickness{
		Ratio: ratio, RatioSD: ratioSD, K: k, TakeOff: theta,
		InformationDepth: 3 * ls, Method: StrohmeierMethod,
	}
	t.Thickness = ls * math.Log1p(ratio/k)
	t.SD = ls * ratioSD / (k + ratio)
	if ratio == 0 {
		t.Warnings = append(t.Warnings, "no overlayer signal (substrate only): thickness 0 within the model")
	}
	if t.Thickness > t.InformationDepth {
		t.Warnings = append(t.Warnings, fmt.Sprintf("thickness %.3g nm exceeds the information depth 3 L sin(theta) = %.3g nm: the substrate signal is below 5 %% and the result is unreliable", t.Thickness, t.InformationDepth))
	}
	return t, nil
}

// Coefficients are the fitted coefficients of the overlayer and substrate
// states with their (co)variances, as a fit reports them.
type Coefficients struct {
	Overlayer, Substrate               float64
	VarOverlayer, VarSubstrate         float64
	Covariance                         float64 // covariance of the two coefficients
	OverlayerAtBound, SubstrateAtBound bool    // pinned at zero by nonnegativity
}

// ThicknessFromCoefficients returns the overlayer thickness from fitted
// coefficients: the ratio R = c_ox / c_m with first-order variance
// R^2 (var_ox/c_ox^2 + var_m/c_m^2 - 2 cov/(c_ox c_m)), then Thickness. If
// the coefficients are against pure standards at their recorded scale, set
// o.SensitivityRatio to 1 (see Overlayer).
//
// A substrate coefficient that is zero or at its bound means oxide-only
// signal and gives an *OverlayerError; an overlayer coefficient that is zero
// or at its bound gives thickness 0 with a warning and, when the overlayer
// variance is known, a one-sided 95 % upper limit in the warning.
func (o Overlayer) ThicknessFromCoefficients(c Coefficients) (Thickness, error) {
	if c.Substrate <= 0 || c.SubstrateAtBound {
		return Thickness{}, &OverlayerError{Reason: fmt.Sprintf("substrate coefficient %g is zero or at its bound (overlayer-only signal): the film is thicker than the information depth, or the substrate state is absent; no thickness can be given", c.Substrate)}
	}
	if c.Overlayer < 0 || c.VarOverlayer < 0 || c.VarSubstrate < 0 {
		return Thickness{}, fmt.Errorf("overlayer thickness: coefficient %g and variances %g, %g must be nonnegative", c.Overlayer, c.VarOverlayer, c.VarSubstrate)
	}
	if c.Overlayer == 0 || c.OverlayerAtBound {
		t, err := o.Thickness(0, 0)
		if err != nil {
			return t, err
		}
		t.SD = math.NaN()
		msg := "overlayer coefficient at zero (substrate-only signal): thickness 0 within the model"
		if c.VarOverlayer > 0 {
			up, err := o.Thickness(1.645*math.Sqrt(c.VarOverlayer)/c.Substrate, 0)
			if err == nil {
				msg += fmt.Sprintf("; one-sided 95 %% upper limit %.3g nm", up.Thickness)
			}
		}
		t.Warnings = []string{msg}
		return t, nil
	}
	r := c.Overlayer / c.Substrate
	v := r * r * (c.VarOverlayer/(c.Overlayer*c.Overlayer) + c.VarSubstrate/(c.Substrate*c.Substrate) - 2*c.Covariance/(c.Overlayer*c.Substrate))
	if v < 0 {
		v = 0
	}
	return o.Thickness(r, math.Sqrt(v))
}
