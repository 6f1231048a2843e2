package index

import "testing"

func TestRequireFieldClauses(t *testing.T) {
	cases := []struct{ in, want string }{
		{"element:Ti state:nitride", "+element:Ti +state:nitride"},
		{`element:Ti "diffusion barrier"`, `+element:Ti "diffusion barrier"`},
		{`note:"a b:c" foil`, `+note:"a b:c" foil`},
		{"+element:Ti -state:oxide", "+element:Ti -state:oxide"},
		{`tags:site\=lab2`, `+tags:site\=lab2`},
		{"beam_energy_kev:>=9.5  name:foil", "+beam_energy_kev:>=9.5  +name:foil"},
		{"foil", "foil"},
		{`"x:y"`, `"x:y"`},
		{":x", ":x"},
	}
	for _, c := range cases {
		if got := requireFieldClauses(c.in); got != c.want {
			t.Errorf("requireFieldClauses(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}
