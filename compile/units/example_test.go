package units_test

import (
	"errors"
	"fmt"

	"github.com/massline/massline/compile/units"
)

func ExampleParse() {
	u, err := units.Parse("cm^2/s")
	if err != nil {
		panic(err)
	}
	fmt.Println(u.Text, u.Scale, u.Dim.Describe())
	fmt.Println(u.Convert(2.5e-6)) // 2.5e-6 cm^2/s in m^2/s
	// Output:
	// cm^2/s 0.0001 m^2/s (diffusivity)
	// 2.5e-10
}

func ExampleParse_error() {
	_, err := units.Parse("mol/(m^3*ss)")
	var e *units.Error
	if errors.As(err, &e) {
		fmt.Printf("%d..%d %s; did you mean %q?\n", e.Offset, e.End, e.Msg, e.Suggestion)
	}
	// Output:
	// 9..11 unknown unit "ss"; did you mean "s"?
}

func ExampleDim_String() {
	d := units.Concentration.Mul(units.Frequency)
	fmt.Println(d, d == units.ReactionRate)
	// Output:
	// mol/(m^3·s) true
}
