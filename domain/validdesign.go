package domain

import "errors"

// ValidDesign is a design document that Validate has passed. Only
// Design.Validated makes one, so whoever is handed one (the review
// engine) need not validate the document again. The document is held as
// it was validated; whoever made it must not change it afterwards.
type ValidDesign struct{ doc *Design }

// Validated returns d as a ValidDesign, or what Validate finds wrong.
func (d Design) Validated() (ValidDesign, error) {
	if err := d.Validate(); err != nil {
		return ValidDesign{}, err
	}
	return ValidDesign{doc: &d}, nil
}

// Design is the validated document; the zero ValidDesign, which
// Validated did not make, is an error.
func (v ValidDesign) Design() (Design, error) {
	if v.doc == nil {
		return Design{}, errors.New("the design document was not validated")
	}
	return *v.doc, nil
}
