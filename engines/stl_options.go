package engines

import (
	"fmt"
	"math"
)

// stlInt reads an integer option; a float64 must be integral.
func stlInt(name string, v any) (int, error) {
	switch x := v.(type) {
	case int:
		return x, nil
	case int64:
		return int(x), nil
	case float64:
		if x == math.Trunc(x) && math.Abs(x) < 1<<31 {
			return int(x), nil
		}
	}
	return 0, fmt.Errorf("stl: option %s must be an integer, got %v", name, v)
}

// stlDegree reads a 0/1 degree option.
func stlDegree(o Options, name string, def int) (int, error) {
	v, ok := o[name]
	if !ok {
		return def, nil
	}
	d, err := stlInt(name, v)
	if err != nil {
		return 0, err
	}
	if d != 0 && d != 1 {
		return 0, fmt.Errorf("stl: %s %d: want 0 or 1", name, d)
	}
	return d, nil
}
