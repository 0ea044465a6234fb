package domain

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"slices"
	"strconv"
	"sync"

	"github.com/go-json-experiment/json"
	"github.com/go-json-experiment/json/jsontext"
	"github.com/santhosh-tekuri/jsonschema/v6"
	"github.com/santhosh-tekuri/jsonschema/v6/kind"
)

// DecodeDesign reads a design document strictly. Input that is not
// well-formed JSON gives a *DecodeError. Well-formed JSON that does not
// fit the format gives a *ValidationError listing every problem with its
// JSON pointer: every repeated name, unknown member and wrong-typed value
// (found by the format's JSON Schema) and everything Validate finds in
// the rest. Call Validate on a document that decodes.
func DecodeDesign(data []byte) (Design, error) {
	if len(bytes.TrimSpace(data)) == 0 {
		return Design{}, &DecodeError{Reason: "the body is empty; send a design document"}
	}
	var d Design
	err := json.Unmarshal(data, &d, StrictJSON())
	if err == nil && bytes.TrimSpace(data)[0] == '{' {
		return d, nil
	}
	if m := malformed(data, err); err != nil && m != nil {
		return Design{}, m
	}
	return describeDesign(data, decodedBefore(err, d.Nodes))
}

// decodedBefore is the nodes the whole-document decode finished before it
// stopped at err: the decoder fills the list in order, so every node
// before the one the error points into is whole. They need not be decoded
// again, which keeps a large document with a late problem about as quick
// to refuse as to accept.
func decodedBefore(err error, nodes []Node) []Node {
	var sem *json.SemanticError
	if !errors.As(err, &sem) {
		return nil
	}
	tokens := slices.Collect(sem.JSONPointer.Tokens())
	if len(tokens) < 2 || tokens[0] != "nodes" {
		return nil
	}
	k, convErr := strconv.Atoi(tokens[1])
	if convErr != nil || k > len(nodes) {
		return nil
	}
	return nodes[:k]
}

// describeDesign lists every problem of a well-formed document that did
// not decode. The document is read node by node, each node decoded by the
// JSON library on its own: a problem costs the schema's time for its own
// node only, so a large document answers about as quickly wrong as right.
func describeDesign(data []byte, decoded []Node) (Design, error) {
	r := designReader{said: map[string]bool{}}
	dec := jsontext.NewDecoder(bytes.NewReader(data), jsontext.AllowDuplicateNames(true))
	if dec.PeekKind() != '{' {
		if _, err := dec.ReadValue(); err != nil {
			return Design{}, malformed(data, err)
		}
		if err := endOfInput(data, dec); err != nil {
			return Design{}, err
		}
		r.add("", "must be a JSON object (a design document)")
		return Design{}, r.p.Err()
	}
	nodes, members, err := r.split(dec, decoded)
	if err == nil && !r.tooMany {
		err = endOfInput(data, dec)
	}
	var de *DecodeError
	switch {
	case errors.As(err, &de):
		return Design{}, err
	case err != nil:
		if m := malformed(data, err); m != nil {
			return Design{}, m
		}
		return Design{}, &DecodeError{Reason: err.Error()}
	}
	d := r.top(members)
	d.Nodes = nodes
	if r.p.Len() == 0 {
		return d, nil
	}
	if r.p.Len() <= MaxProblems {
		var more *ValidationError
		if errors.As(d.Validate(), &more) {
			for _, fp := range more.Problems {
				if !coveredBy(fp.Pointer, r.said) {
					r.add(fp.Pointer, "%s", fp.Detail)
				}
			}
		}
	}
	return Design{}, r.p.Err()
}

// designReader collects the problems of one document, each once.
type designReader struct {
	p       Problems
	said    map[string]bool
	tooMany bool // more nodes than a design may have: the rest was not read
}

// maxMemberBytes bounds the value of a member of the document or of a
// node that is described: the longest a valid one can be (a description
// of MaxTextLen characters, a feed with its connectors) is far shorter,
// and the schema's time grows with what it is given.
const maxMemberBytes = 64 << 10

func (r *designReader) add(ptr, format string, args ...any) {
	if !r.said[ptr] {
		r.said[ptr] = true
		r.p.Add(ptr, format, args...)
	}
}

// split reads the document's object: its nodes, each decoded (the first
// of them as already decoded), and its other members as written.
func (r *designReader) split(dec *jsontext.Decoder, decoded []Node) ([]Node, map[string]jsontext.Value, error) {
	if _, err := dec.ReadToken(); err != nil {
		return nil, nil, err
	}
	var nodes []Node
	members := map[string]jsontext.Value{}
	seen := map[string]bool{}
	for dec.PeekKind() != '}' {
		tok, err := dec.ReadToken()
		if err != nil {
			return nil, nil, err
		}
		name := tok.String()
		if seen[name] {
			r.add("/"+PointerToken(name), "appears twice in one object")
		}
		seen[name] = true
		if name != "nodes" || dec.PeekKind() != '[' {
			raw, err := dec.ReadValue()
			if err != nil {
				return nil, nil, err
			}
			if len(raw) > maxMemberBytes {
				r.add("/"+PointerToken(name), "is %d bytes long; no member of a design is longer than %d", len(raw), maxMemberBytes)
				continue
			}
			members[name] = raw.Clone()
			continue
		}
		if _, err := dec.ReadToken(); err != nil {
			return nil, nil, err
		}
		for count := 0; dec.PeekKind() != ']'; count++ {
			if count == MaxDesignNodes {
				r.add("/nodes", "lists more than %d items; at most %d are allowed", MaxDesignNodes, MaxDesignNodes)
				r.tooMany = true
				return nodes, members, nil
			}
			if count < len(decoded) {
				if err := dec.SkipValue(); err != nil {
					return nil, nil, err
				}
				nodes = append(nodes, decoded[count])
				continue
			}
			raw, err := dec.ReadValue()
			if err != nil {
				return nil, nil, err
			}
			if r.p.Len() > MaxProblems {
				continue // an answer's worth found: the rest is only counted
			}
			nodes = append(nodes, r.node(raw, count))
		}
		if _, err := dec.ReadToken(); err != nil {
			return nil, nil, err
		}
		nodes = slices.Clip(nodes)
		if nodes == nil {
			nodes = []Node{}
		}
	}
	_, err := dec.ReadToken()
	return nodes, members, err
}

// endOfInput is a *DecodeError when anything but space follows the
// document.
func endOfInput(data []byte, dec *jsontext.Decoder) error {
	off := dec.InputOffset()
	if _, err := dec.ReadToken(); err != io.EOF {
		off += int64(len(data[off:]) - len(bytes.TrimLeft(data[off:], " \t\r\n")))
		return &DecodeError{Offset: off, Reason: "trailing data after the design document" + lineCol(data, off)}
	}
	return nil
}

// top decodes the document's members other than its nodes.
func (r *designReader) top(members map[string]jsontext.Value) Design {
	raw, err := json.Marshal(members, StrictJSON())
	if err != nil {
		r.add("", "cannot be read: %v", err)
		return Design{}
	}
	var d Design
	if err := json.Unmarshal(raw, &d, StrictJSON()); err != nil {
		d = Design{}
		r.describe(raw, nil, designSchemas().design, &d)
	}
	return d
}

// node decodes the i-th node, describing whatever keeps it from decoding.
func (r *designReader) node(raw jsontext.Value, i int) Node {
	var n Node
	if err := json.Unmarshal(raw, &n, StrictJSON()); err == nil {
		return n
	}
	at := []string{"nodes", strconv.Itoa(i)}
	n = Node{}
	r.describe(raw, at, designSchemas().node, &n)
	return n
}

// describe says what keeps raw, the value at at, from decoding into out
// (a *Design or *Node), sets those members aside and decodes the rest.
func (r *designReader) describe(raw jsontext.Value, at []string, schema *jsonschema.Schema, out any) {
	prefix := pointerOf(at)
	if len(raw) > maxMemberBytes {
		r.add(prefix, "is %d bytes long; a valid one is far shorter than %d", len(raw), maxMemberBytes)
		return
	}
	for _, ptr := range repeatedNames(raw) {
		if len(at) == 2 && ptr == "/feed" {
			r.add(prefix+ptr, "appears twice: a node is fed from exactly one parent")
		} else {
			r.add(prefix+ptr, "appears twice in one object")
		}
	}
	var doc any
	if err := json.Unmarshal(raw, &doc, jsontext.AllowDuplicateNames(true)); err != nil {
		// A number out of float range: read every number as written.
		if doc, err = jsonschema.UnmarshalJSON(bytes.NewReader(raw)); err != nil {
			r.add(prefix, "cannot be read: %v", err)
			return
		}
		doc = numbersAsWritten(doc)
	}
	if _, ok := doc.(map[string]any); !ok {
		r.add(prefix, "must be an object")
		return
	}
	if conns, ok := connectorsOf(doc); ok && len(conns) > MaxConnectorsPerFeed {
		r.add(prefix+"/feed/connectors", "lists %d items; at most %d are allowed", len(conns), MaxConnectorsPerFeed)
		return
	}
	var ve *jsonschema.ValidationError
	if errors.As(schema.Validate(doc), &ve) {
		for k, leaf := range leaves(ve) {
			if k > MaxProblems {
				break
			}
			loc := leaf.InstanceLocation
			ptr := prefix + pointerOf(loc)
			switch e := leaf.ErrorKind.(type) {
			case *kind.AdditionalProperties:
				for _, name := range e.Properties {
					r.add(ptr+"/"+PointerToken(name), "is not a field of a %s (the design format lists its fields: GET /v1/schemas/design.json)",
						objectAt(slices.Concat(at, loc)))
					doc = prune(doc, append(slices.Clone(loc), name))
				}
			case *kind.Type:
				if slices.Equal(e.Want, []string{"null"}) {
					continue // the other branch of an optional object says what is wrong
				}
				r.add(ptr, "must be %s", typeWords(e.Want))
				doc = prune(doc, loc)
			}
		}
	}
	// What is left decodes, unless a number is out of range for its Go
	// type; each such value is set aside in turn, a bounded number of times.
	for range MaxProblems {
		cleaned, err := json.Marshal(doc)
		if err != nil {
			return
		}
		err = json.Unmarshal(cleaned, out, StrictJSON())
		if err == nil {
			return
		}
		fp := shapeProblem(err)
		loc := jsontext.Pointer(fp.Pointer)
		if fp.Pointer == "" || !loc.IsValid() || r.said[prefix+fp.Pointer] {
			r.add(prefix+fp.Pointer, "%s", fp.Detail)
			return
		}
		r.add(prefix+fp.Pointer, "%s", fp.Detail)
		doc = prune(doc, slices.Collect(loc.Tokens()))
	}
}

// designSchemas are the design schema and its node schema compiled,
// once: they are made from the declaration, which does not change while
// the program runs.
var designSchemas = sync.OnceValue(func() struct{ design, node *jsonschema.Schema } {
	doc, err := jsonschema.UnmarshalJSON(bytes.NewReader(DesignSchema()))
	if err != nil {
		panic(fmt.Sprintf("read the design schema: %v", err))
	}
	c := jsonschema.NewCompiler()
	if err := c.AddResource(DesignSchemaID, doc); err != nil {
		panic(fmt.Sprintf("add the design schema: %v", err))
	}
	return struct{ design, node *jsonschema.Schema }{
		c.MustCompile(DesignSchemaID), c.MustCompile(DesignSchemaID + "#/$defs/node"),
	}
})

// connectorsOf is the connectors array of a node's feed, if it has one.
func connectorsOf(node any) ([]any, bool) {
	n, _ := node.(map[string]any)
	feed, _ := n["feed"].(map[string]any)
	conns, ok := feed["connectors"].([]any)
	return conns, ok
}
