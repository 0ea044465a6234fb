// Package electric holds the physics behind a design review: conductors,
// battery packs, brushed DC motors, regulators and fuses. It does no I/O;
// every table it knows is returned by a function so callers can store,
// edit and pass it back in.
package electric

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
)

// ErrUnknownGauge is wrapped by every ParseGauge failure.
var ErrUnknownGauge = errors.New("unknown wire gauge")

// Gauge is a conductor size. Label is canonical ("18AWG", "2/0AWG",
// "1.5mm2"). For AWG sizes AWG holds the index used in the ASTM B258
// formula: 1/0 is 0, 2/0 is -1, 3/0 is -2 and 4/0 is -3.
type Gauge struct {
	Label   string
	AWG     int
	Metric  bool
	AreaMM2 float64
}

// Smallest and largest AWG sizes accepted, as formula indexes.
const (
	smallestAWG = 30
	largestAWG  = -3 // 4/0
)

// metricSizesMM2 lists the metric cross-sections ParseGauge accepts: the
// IEC 60228 nominal series from 0.5 mm² to 120 mm², and below it the thin
// automotive sizes of ISO 6722-1 (0.13, 0.22, 0.35 mm²; from memory).
// Accepting only listed sizes turns a slip such as "15mm2" into an error
// instead of a plausible wire.
func metricSizesMM2() []float64 {
	return []float64{0.13, 0.22, 0.35, 0.5, 0.75, 1, 1.5, 2.5, 4, 6, 10, 16, 25, 35, 50, 70, 95, 120}
}

// ParseGauge reads "30AWG" … "4/0AWG" (also "0AWG"…"0000AWG" for the
// aught sizes) or a metric size such as "0.5mm2" or "1.5mm²". Case,
// surrounding spaces and a space before the unit are ignored. Validation
// parses every feed's gauge of every review, so the unit is matched
// without lowering a copy of the label: the numbers before it are digits
// or go to strconv, which ignores their case, so lowering the whole label
// (as the first version did) never changed an answer.
func ParseGauge(label string) (Gauge, error) {
	awg, areaMM2, err := readGauge(label)
	switch {
	case err != nil:
		return Gauge{}, err
	case areaMM2 > 0:
		return MetricGauge(areaMM2), nil
	}
	return AWGGauge(awg), nil
}

// CheckGauge gives the error ParseGauge gives for label, or nil, without
// working out the size's area: validation only needs to know.
func CheckGauge(label string) error {
	_, _, err := readGauge(label)
	return err
}

// readGauge reads a label as an AWG formula index, or as a metric area
// (above 0) when it names one.
func readGauge(label string) (awg int, areaMM2 float64, err error) {
	s := strings.TrimSpace(label)
	number := func(unit string) string { return strings.TrimSpace(s[:len(s)-len(unit)]) }
	switch {
	case s == "":
		return 0, 0, fmt.Errorf("%w: empty label; write e.g. \"18AWG\" or \"1.5mm2\"", ErrUnknownGauge)
	case hasSuffixFoldASCII(s, "awg"):
		awg, err = parseAWG(label, number("awg"))
		return awg, 0, err
	case hasSuffixFoldASCII(s, "mm2"):
		areaMM2, err = parseMetric(label, number("mm2"))
		return 0, areaMM2, err
	case hasSuffixFoldASCII(s, "mm²"):
		areaMM2, err = parseMetric(label, number("mm²"))
		return 0, areaMM2, err
	}
	return 0, 0, fmt.Errorf("%w: %q has no unit; write \"NNAWG\" (30AWG to 4/0AWG) or a metric size like \"1.5mm2\"", ErrUnknownGauge, label)
}

// hasSuffixFoldASCII reports whether s ends in suffix, a lower-case unit,
// with the ASCII letters of s in either case.
func hasSuffixFoldASCII(s, suffix string) bool {
	if len(s) < len(suffix) {
		return false
	}
	tail := s[len(s)-len(suffix):]
	for i := range len(suffix) {
		c := tail[i]
		if 'A' <= c && c <= 'Z' {
			c += 'a' - 'A'
		}
		if c != suffix[i] {
			return false
		}
	}
	return true
}

func parseAWG(label, num string) (int, error) {
	n, ok := awgIndex(num)
	if !ok {
		return 0, fmt.Errorf("%w: %q is not an AWG number; write 30AWG to 1AWG, or 1/0AWG to 4/0AWG", ErrUnknownGauge, label)
	}
	if n > smallestAWG || n < largestAWG {
		return 0, fmt.Errorf("%w: %q is outside 30AWG to 4/0AWG", ErrUnknownGauge, label)
	}
	return n, nil
}

// awgIndex turns "18", "1/0", "0", "00", "000", "0000", "2/0" … into the
// formula index.
func awgIndex(num string) (int, bool) {
	if top, ok := strings.CutSuffix(num, "/0"); ok {
		if len(top) != 1 || top[0] < '1' || top[0] > '4' {
			return 0, false
		}
		return 1 - int(top[0]-'0'), true
	}
	if num != "" && strings.Trim(num, "0") == "" && len(num) <= 4 {
		return 1 - len(num), true // "0" is 1/0, "00" is 2/0 …
	}
	if num == "" || len(num) > 2 || num[0] == '0' {
		return 0, false
	}
	k := 0
	for i := range len(num) {
		if num[i] < '0' || num[i] > '9' {
			return 0, false
		}
		k = 10*k + int(num[i]-'0')
	}
	return k, true
}

// AWGGauge builds the gauge for a formula index without range checks;
// use ParseGauge for labels from outside.
func AWGGauge(n int) Gauge {
	d := AWGDiameterMM(n)
	return Gauge{Label: AWGLabel(n), AWG: n, AreaMM2: math.Pi / 4 * d * d}
}

// AWGLabel is the canonical label of a formula index: 18 → "18AWG",
// 0 → "1/0AWG", -3 → "4/0AWG". The sizes ParseGauge accepts are slices
// of constants, so parsing a label allocates nothing.
func AWGLabel(n int) string {
	const (
		aught = "1/0AWG2/0AWG3/0AWG4/0AWG"                                          // 0 … -3, six bytes each
		ones  = "1AWG2AWG3AWG4AWG5AWG6AWG7AWG8AWG9AWG"                              // 1 … 9, four bytes each
		tens  = "10AWG11AWG12AWG13AWG14AWG15AWG16AWG17AWG18AWG19AWG20AWG21AWG22AWG" // 10 … 22, five bytes each
		more  = "23AWG24AWG25AWG26AWG27AWG28AWG29AWG30AWG"                          // 23 … 30, five bytes each
	)
	switch {
	case largestAWG <= n && n <= 0:
		return aught[6*-n : 6*-n+6]
	case 1 <= n && n <= 9:
		return ones[4*(n-1) : 4*n]
	case 10 <= n && n <= 22:
		return tens[5*(n-10) : 5*(n-9)]
	case 23 <= n && n <= smallestAWG:
		return more[5*(n-23) : 5*(n-22)]
	case n <= 0:
		return strconv.Itoa(1-n) + "/0AWG"
	}
	return strconv.Itoa(n) + "AWG"
}

func parseMetric(label, num string) (float64, error) {
	area, err := strconv.ParseFloat(num, 64)
	if err != nil {
		return 0, fmt.Errorf("%w: %q is not a metric area; write e.g. \"0.75mm2\"", ErrUnknownGauge, label)
	}
	for _, size := range metricSizesMM2() {
		if area == size {
			return size, nil
		}
	}
	return 0, fmt.Errorf("%w: %q is not a standard metric size (accepted: %s mm2)", ErrUnknownGauge, label, formatSizes(metricSizesMM2()))
}

// MetricGauge builds the gauge for a metric cross-section without checking
// that it is a standard size.
func MetricGauge(areaMM2 float64) Gauge {
	return Gauge{Label: metricLabel(areaMM2), Metric: true, AreaMM2: areaMM2}
}

// metricLabel is the canonical label of a cross-section: strconv's
// shortest form and "mm2"; a constant for each size of metricSizesMM2.
func metricLabel(areaMM2 float64) string {
	switch areaMM2 {
	case 0.13:
		return "0.13mm2"
	case 0.22:
		return "0.22mm2"
	case 0.35:
		return "0.35mm2"
	case 0.5:
		return "0.5mm2"
	case 0.75:
		return "0.75mm2"
	case 1:
		return "1mm2"
	case 1.5:
		return "1.5mm2"
	case 2.5:
		return "2.5mm2"
	case 4:
		return "4mm2"
	case 6:
		return "6mm2"
	case 10:
		return "10mm2"
	case 16:
		return "16mm2"
	case 25:
		return "25mm2"
	case 35:
		return "35mm2"
	case 50:
		return "50mm2"
	case 70:
		return "70mm2"
	case 95:
		return "95mm2"
	case 120:
		return "120mm2"
	}
	return strconv.FormatFloat(areaMM2, 'f', -1, 64) + "mm2"
}

func formatSizes(sizes []float64) string {
	parts := make([]string, len(sizes))
	for i, s := range sizes {
		parts[i] = strconv.FormatFloat(s, 'f', -1, 64)
	}
	return strings.Join(parts, ", ")
}

// AWGDiameterMM is the ASTM B258 diameter of a solid conductor of formula
// index n: 0.127 mm × 92^((36−n)/39).
func AWGDiameterMM(n int) float64 {
	return 0.127 * math.Pow(92, float64(36-n)/39)
}

// Annealed copper: IEC 60028 resistivity at 20 °C and its temperature
// coefficient at 20 °C.
const (
	CopperResistivityOhmMM2PerM = 1.0 / 58
	CopperAlphaPerK             = 0.00393
	referenceTempC              = 20
)

// CopperOhmPerM is the resistance of one metre of annealed copper of the
// given cross-section at tempC (IEC 60028 resistivity, linear α).
func CopperOhmPerM(areaMM2, tempC float64) float64 {
	return CopperResistivityOhmMM2PerM / areaMM2 * (1 + CopperAlphaPerK*(tempC-referenceTempC))
}

// LoopResistanceOhm is the resistance of a feed: the outgoing and the
// return conductor, each lengthM long and of gauge g.
func LoopResistanceOhm(g Gauge, lengthM, tempC float64) float64 {
	return 2 * lengthM * CopperOhmPerM(g.AreaMM2, tempC)
}

// VoltageDropV is the drop across a feed carrying currentA.
func VoltageDropV(g Gauge, lengthM, tempC, currentA float64) float64 {
	return currentA * LoopResistanceOhm(g, lengthM, tempC)
}
