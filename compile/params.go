package compile

// Parameters returns the parameter names of a shape (sphere, slab, …) or
// boundary condition (film, bath, …), for completion in a notebook; nil
// for any other name.
func Parameters(name string) []string {
	if p, ok := shapeParams[name]; ok {
		return append([]string(nil), p...)
	}
	if p, ok := condParams[name]; ok {
		return append([]string(nil), p[0]...)
	}
	return nil
}

// BlockKeys returns the property keys a block accepts after the given
// statement keyword (species, balance, settings), for completion; nil
// for any other keyword.
func BlockKeys(keyword string) []string {
	switch keyword {
	case "species":
		return append([]string(nil), speciesProps...)
	case "balance":
		return append([]string(nil), balanceProps...)
	case "settings":
		return append([]string(nil), settingKeys...)
	}
	return nil
}
