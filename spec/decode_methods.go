package spec

import (
	"fmt"
	"math"
	"strconv"

	"gopkg.in/yaml.v3"
)

// decomposition decodes the decomposition section: a method that
// decomposes (classical by default) and that method's options, less the
// ones that only matter for forecasting.
func (d *decoder) decomposition(n *yaml.Node, path string, dc *Decomposition) {
	n = d.resolve(n)
	if n == nil {
		return
	}
	method := "classical"
	if n.Kind == yaml.MappingNode {
		for i := 0; i+1 < len(n.Content); i += 2 {
			if n.Content[i].Value == "method" {
				var m string
				d.enum(d.resolve(n.Content[i+1]), path+".method", "decomposition method", DecompositionMethods(), &m)
				if m == "" {
					return
				}
				method = m
			}
		}
	}
	def := catalog[method]
	dc.Method = method
	dc.Options = map[string]any{}
	fields := []field{{"method", false, func(*yaml.Node, string) {}}}
	for _, name := range MethodOptionNames(method) {
		opt := def.Options[name]
		if opt.ForecastOnly {
			continue
		}
		if opt.Default != nil {
			dc.Options[name] = opt.Default
		}
		fields = append(fields, field{name, false, func(n *yaml.Node, p string) {
			if v, ok := d.option(n, p, method, name, opt); ok {
				dc.Options[name] = v
			}
		}})
	}
	d.mapping(n, path, "decomposition ("+method+")", fields)
	if def.Check != nil {
		if msg := def.Check(dc.Options); msg != "" {
			d.errAt(n, path, "%s: %s", method, msg)
		}
	}
	if method == "classical" {
		dc.Form = Form(dc.Options["form"].(string))
		dc.Average = dc.Options["average"].(string)
	}
}

// DecompositionMethods lists the methods that can serve as the decomposition.
func DecompositionMethods() []string {
	var out []string
	for _, n := range MethodNames() {
		if catalog[n].Decomposes {
			out = append(out, n)
		}
	}
	return out
}

func (d *decoder) methods(n *yaml.Node, path string) ([]MethodSpec, []*yaml.Node) {
	var out []MethodSpec
	var nodes []*yaml.Node
	list := d.items(n, path, "methods", func(item *yaml.Node, p string) {
		if m, ok := d.method(item, p); ok {
			out = append(out, m)
			nodes = append(nodes, item)
		}
	})
	if list != nil && len(list.Content) == 0 {
		d.errAt(list, path, "at least one method is needed; choose from %s", quoteList(MethodNames()))
	}
	return out, nodes
}

func (d *decoder) methodName(n *yaml.Node, path string) (string, bool) {
	var name string
	d.str(n, path, "a method name", &name)
	if name == "" {
		return "", false
	}
	if _, ok := catalog[name]; !ok {
		msg := fmt.Sprintf("unknown method %q", name)
		if s := suggest(name, MethodNames()); s != "" {
			msg += fmt.Sprintf(" (did you mean %q?)", s)
		}
		msg += "; methods: " + quoteList(MethodNames())
		d.errAt(n, path, "%s", msg)
		return "", false
	}
	return name, true
}

func (d *decoder) method(n *yaml.Node, path string) (MethodSpec, bool) {
	switch n.Kind {
	case yaml.ScalarNode:
		name, ok := d.methodName(n, path)
		if !ok {
			return MethodSpec{}, false
		}
		return MethodSpec{Method: name, Label: name, Options: defaults(catalog[name])}, true
	case yaml.MappingNode:
	default:
		d.errAt(n, path, "expected a method name or a mapping with a method key, found %s", kindName(n))
		return MethodSpec{}, false
	}
	// Find the method key first: the allowed options depend on it.
	var nameNode *yaml.Node
	for i := 0; i+1 < len(n.Content); i += 2 {
		if n.Content[i].Value == "method" {
			nameNode = n.Content[i+1]
			break
		}
	}
	if nameNode == nil {
		d.errAt(n, path, "missing required key \"method\" in a method mapping")
		return MethodSpec{}, false
	}
	name, ok := d.methodName(d.resolve(nameNode), path+".method")
	if !ok {
		return MethodSpec{}, false
	}
	def := catalog[name]
	m := MethodSpec{Method: name, Label: name, Options: defaults(def)}
	fields := []field{
		{"method", true, func(*yaml.Node, string) {}},
		{"label", false, func(n *yaml.Node, p string) {
			d.str(n, p, "a label", &m.Label)
			if m.Label != "" && !nameRE.MatchString(m.Label) {
				d.errAt(n, p, "label %q may hold only letters, digits, '.', '_' and '-', starting with a letter or digit", m.Label)
			}
		}},
	}
	for _, optName := range MethodOptionNames(name) {
		opt := def.Options[optName]
		fields = append(fields, field{optName, false, func(n *yaml.Node, p string) {
			if v, ok := d.option(n, p, name, optName, opt); ok {
				m.Options[optName] = v
			}
		}})
	}
	what := fmt.Sprintf("method %s", name)
	if len(def.Options) == 0 {
		what = fmt.Sprintf("method %s (which takes no options besides label)", name)
	}
	d.mapping(n, path, what, fields)
	if def.Check != nil {
		if msg := def.Check(m.Options); msg != "" {
			d.errAt(n, path, "%s: %s", name, msg)
		}
	}
	return m, true
}

func defaults(def methodDef) map[string]any {
	out := map[string]any{}
	for k, o := range def.Options {
		if o.Default != nil {
			out[k] = o.Default
		}
	}
	return out
}

func (d *decoder) option(n *yaml.Node, path, method, name string, o optionDef) (any, bool) {
	switch o.Kind {
	case kindEnum:
		var v string
		d.enum(n, path, fmt.Sprintf("%s %s", method, name), o.Allowed, &v)
		return v, v != ""
	case kindIntOrWord:
		sn, ok := d.scalar(n, path, fmt.Sprintf("%s %s (an integer or %s)", method, name, quoteList(o.Allowed)))
		if !ok {
			return nil, false
		}
		if sn.Tag != "!!int" {
			var v string
			d.enum(sn, path, fmt.Sprintf("%s %s (an integer or %s)", method, name, quoteList(o.Allowed)), o.Allowed, &v)
			return v, v != ""
		}
		fallthrough
	case kindInt:
		var v int
		if !d.integer(n, path, fmt.Sprintf("%s %s (an integer)", method, name), &v) {
			return nil, false
		}
		if float64(v) < o.Min || float64(v) > o.Max {
			d.errAt(n, path, "%s %s must be between %g and %g, found %d", method, name, o.Min, o.Max, v)
			return nil, false
		}
		if o.Odd && v%2 == 0 {
			d.errAt(n, path, "%s %s must be odd, found %d", method, name, v)
			return nil, false
		}
		return v, true
	case kindFloat:
		sn, ok := d.scalar(n, path, fmt.Sprintf("%s %s (a number)", method, name))
		if !ok {
			return nil, false
		}
		if sn.Tag != "!!int" && sn.Tag != "!!float" {
			d.errAt(sn, path, "expected %s %s (a number), found %s", method, name, kindName(sn))
			return nil, false
		}
		v, err := strconv.ParseFloat(sn.Value, 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			d.errAt(sn, path, "expected %s %s (a finite number), found %s", method, name, sn.Value)
			return nil, false
		}
		if v < o.Min || v > o.Max {
			d.errAt(sn, path, "%s %s must be between %g and %g, found %g", method, name, o.Min, o.Max, v)
			return nil, false
		}
		return v, true
	case kindBool:
		sn, ok := d.scalar(n, path, fmt.Sprintf("%s %s (true or false)", method, name))
		if !ok {
			return nil, false
		}
		if sn.Tag != "!!bool" {
			d.errAt(sn, path, "expected %s %s (true or false), found %s", method, name, kindName(sn))
			return nil, false
		}
		return sn.Value == "true", true
	}
	panic("spec: unknown option kind")
}
