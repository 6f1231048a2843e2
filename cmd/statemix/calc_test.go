package main

import (
	"bytes"
	"encoding/json"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// runCalc drives the command tree in-process.
func runCalc(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var out, errb bytes.Buffer
	app := &App{Out: &out, Err: &errb}
	code = app.Execute(args)
	return code, out.String(), errb.String()
}

// TestCalcImfpJSON checks the JSON contract against DOMAIN.md's TPP-2M
// values (same formula: tolerance 0.002 nm).
func TestCalcImfpJSON(t *testing.T) {
	for _, c := range []struct {
		args []string
		want float64
	}{
		// The example, all properties given.
		{[]string{"--formula", "Al", "--density", "2.70", "--valence", "3", "--gap", "0", "--energy", "1000"}, 2.366},
		// --formula alone: built-in table (Al 2.70, Nv 3, Eg 0).
		{[]string{"--formula", "Al", "--energy", "1393"}, 3.072},
		{[]string{"--formula", "SiO2", "--energy", "1000"}, 3.025},
		{[]string{"--formula", "Al2O3", "--energy", "1000"}, 2.497},
		// Override one field: Si with Eg 1.1 (table 1.12) and the rest from the table.
		{[]string{"--formula", "Si", "--gap", "1.1", "--energy", "1000"}, 2.386},
		{[]string{"--formula", "Au", "--energy", "1000"}, 1.230},
	} {
		args := append([]string{"calc", "imfp", "--json"}, c.args...)
		code, out, errs := runCalc(t, args...)
		if code != 0 {
			t.Fatalf("%v: exit %d, stderr %s", args, code, errs)
		}
		var v struct {
			Schema   string   `json:"schema"`
			IMFP     *float64 `json:"imfp_nm"`
			Ep       float64  `json:"plasmon_energy_ev"`
			Warnings []string `json:"warnings"`
		}
		if err := json.Unmarshal([]byte(out), &v); err != nil {
			t.Fatalf("%v: %v in %s", args, err, out)
		}
		if v.Schema != "statemix.calc/v1" || v.IMFP == nil || !scalar.EqualWithinAbs(*v.IMFP, c.want, 0.002) || v.Ep <= 0 {
			t.Errorf("%v: %s, want imfp_nm %.3f", args, out, c.want)
		}
		if v.Warnings == nil || len(v.Warnings) != 0 {
			t.Errorf("%v: warnings %v, want []", args, v.Warnings)
		}
	}
}

func TestCalcImfpHuman(t *testing.T) {
	// N(Cu) = 8.96 * 6.02214076e23 / 63.546 = 8.4912e22 cm-3 (hand calculation).
	code, out, _ := runCalc(t, "calc", "imfp", "--formula", "Cu", "--energy", "1000", "--element", "Cu")
	if code != 0 || !strings.Contains(out, "IMFP 1.545 nm") || !strings.Contains(out, "TPP-2M") || !strings.Contains(out, "N(Cu) 8.4912e+22 atoms/cm3") {
		t.Errorf("exit %d, output %q", code, out)
	}
	// Outside the fitted range: a warning on stderr and in JSON.
	code, out, errs := runCalc(t, "calc", "imfp", "--formula", "Al", "--energy", "3000", "--json")
	if code != 0 || !strings.Contains(errs, "warning") || !strings.Contains(out, "outside 50-2000 eV") {
		t.Errorf("3000 eV: exit %d, stdout %q, stderr %q", code, out, errs)
	}
	code, out, _ = runCalc(t, "calc", "imfp", "--formula", "SiO2", "--energy", "1000", "--method", "seah-dench", "--json")
	var v map[string]any
	if code != 0 || json.Unmarshal([]byte(out), &v) != nil || v["attenuation_length_nm"] == nil {
		t.Errorf("seah-dench: exit %d, %s", code, out)
	}
}

func TestCalcImfpErrors(t *testing.T) {
	for _, c := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"--formula", "Xx2O", "--energy", "1000"}, exitUsage, `unknown element symbol "Xx"`},
		{[]string{"--formula", "InP", "--energy", "1000"}, exitUsage, "not in the built-in table"},
		{[]string{"--formula", "Al"}, exitUsage, "--energy is required"},
		{[]string{"--energy", "1000"}, exitUsage, "--formula is required"},
		{[]string{"--formula", "Al", "--energy", "-3"}, exitUsage, "positive kinetic energy"},
		{[]string{"--formula", "Al", "--energy", "1000", "--density", "0"}, exitUsage, "density"},
		{[]string{"--formula", "Al", "--energy", "1000", "--method", "magic"}, exitUsage, "tpp2m or seah-dench"},
		{[]string{"--formula", "Al", "--energy", "abc"}, exitUsage, "invalid argument"},
		{[]string{"--formula", "SiO2", "--energy", "1000", "--element", "Al"}, exitUsage, "no Al"},
	} {
		code, _, errs := runCalc(t, append([]string{"calc", "imfp"}, c.args...)...)
		if code != c.code || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d, stderr %q; want %d and %q", c.args, code, errs, c.code, c.want)
		}
	}
}

// TestCalcOverlayer is DOMAIN.md's worked check: Al, ratio 1 -> 2.574 nm at
// 90 degrees (quoted to 1 pm: tolerance 0.0005 nm).
func TestCalcOverlayer(t *testing.T) {
	base := []string{"calc", "overlayer", "--ratio", "1", "--n-overlayer", "4.690e22", "--n-substrate", "6.026e22",
		"--lambda-overlayer", "3.210", "--lambda-substrate", "3.072"}
	code, out, errs := runCalc(t, append(base, "--take-off", "90", "--json")...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var v struct {
		Schema    string   `json:"schema"`
		Thickness float64  `json:"thickness_nm"`
		SD        *float64 `json:"thickness_sd_nm"`
		TakeOff   float64  `json:"take_off_deg"`
	}
	if err := json.Unmarshal([]byte(out), &v); err != nil {
		t.Fatal(err)
	}
	if v.Schema != "statemix.calc/v1" || !scalar.EqualWithinAbs(v.Thickness, 2.574, 5e-4) || v.SD != nil || v.TakeOff != 90 {
		t.Errorf("%s", out)
	}
	// Default take-off is 90; human output names the method and the unit.
	code, out, _ = runCalc(t, append(base, "--ratio-sd", "0.1")...)
	if code != 0 || !strings.Contains(out, "2.574 +/- 0.177 nm") || !strings.Contains(out, "Strohmeier") {
		t.Errorf("human: exit %d, %q", code, out)
	}
	for _, c := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"calc", "overlayer", "--ratio", "1"}, exitUsage, "--n-overlayer is required"},
		{append(base, "--take-off", "0"), exitUsage, "take-off"},
		{append(base, "--take-off", "95"), exitUsage, "take-off"},
		{append(append([]string{}, base[:3]...), "-1", "--n-overlayer", "1", "--n-substrate", "1", "--lambda-overlayer", "1", "--lambda-substrate", "1"), exitUsage, "nonnegative"},
		{append(append([]string{}, base[:3]...), "+Inf", "--n-overlayer", "1", "--n-substrate", "1", "--lambda-overlayer", "1", "--lambda-substrate", "1"), exitBadInput, "no substrate signal"},
		{append(base, "--lambda-substrate", "0"), exitUsage, "positive"},
	} {
		code, _, errs := runCalc(t, c.args...)
		if code != c.code || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d, stderr %q; want %d and %q", c.args, code, errs, c.code, c.want)
		}
	}
	// A thick film warns.
	code, _, errs = runCalc(t, append(base[:2], "--ratio", "200", "--n-overlayer", "4.690e22", "--n-substrate", "6.026e22",
		"--lambda-overlayer", "3.210", "--lambda-substrate", "3.072")...)
	if code != 0 || !strings.Contains(errs, "information depth") {
		t.Errorf("thick film: exit %d, stderr %q", code, errs)
	}
}

func TestCalcHelp(t *testing.T) {
	for _, args := range [][]string{{"calc", "--help"}, {"calc", "imfp", "--help"}, {"calc", "overlayer", "--help"}} {
		code, out, _ := runCalc(t, args...)
		if code != 0 || !strings.Contains(out, "Examples:") || !strings.Contains(out, "statemix calc") {
			t.Errorf("%v: exit %d, %q", args, code, out)
		}
	}
	if code, _, _ := runCalc(t, "calc", "nonsense"); code != exitUsage {
		t.Errorf("calc nonsense: exit %d, want %d", code, exitUsage)
	}
}
