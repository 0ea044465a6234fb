package api

import (
	"encoding/json"
	"fmt"
	"math"
	"net/http"
	"strings"
	"testing"
)

func TestMotorFit(t *testing.T) {
	h := newDesignHarness(t, Config{})
	addMotor := func(name string) int64 {
		var c struct {
			ID int64 `json:"id"`
		}
		body := fmt.Sprintf(`{"name": %q, "kind": "motor", "rated_v": 12, "stall_a": 4.5}`, name)
		h.expect(h.call(http.MethodPost, "/v1/components", "ada", []byte(body)), http.StatusCreated, &c)
		return c.ID
	}
	measure := func(id int64, v, a, rpm float64) {
		body := fmt.Sprintf(`{"voltage_v": %g, "current_a": %g, "speed_rpm": %g}`, v, a, rpm)
		h.expect(h.call(http.MethodPost, fmt.Sprintf("/v1/components/%d/measurements", id), "ada", []byte(body)), http.StatusCreated, nil)
	}

	// A brushed motor's speed falls linearly with current (common
	// practice): n = kv·(V − I·R). With kv = 500 rpm/V and R = 3 Ω, at
	// 12 V: n = 6000 − 1500·I, zero at 4 A; at 6 V: n = 3000 − 1500·I,
	// zero at 2 A. The 6 V readings sag a little, as a bench supply does.
	wiper := addMotor("wiper motor")
	for _, p := range [][3]float64{{12, 0.5, 5250}, {12, 1, 4500}, {12, 2, 3000}, {6, 0.5, 2250}, {5.9, 1.5, 750}} {
		measure(wiper, p[0], p[1], p[2])
	}
	// A reading without a speed is left out of the fit.
	h.expect(h.call(http.MethodPost, fmt.Sprintf("/v1/components/%d/measurements", wiper), "ada",
		[]byte(`{"voltage_v": 12, "current_a": 1.5}`)), http.StatusCreated, nil)

	cases := []struct {
		query                 string
		voltage, stall, r, kv float64
		points                int
	}{
		{"", 12, 4, 3, 500, 3}, // default: the voltage with the most readings
		{"?voltage_v=12", 12, 4, 3, 500, 3},
		{"?voltage_v=6", 5.95, 2, 2.975, 504.2, 2}, // the mean of 6 and 5.9 V
	}
	for _, tc := range cases {
		t.Run("fit"+tc.query, func(t *testing.T) {
			var fit MotorFitView
			rec := h.call(http.MethodGet, fmt.Sprintf("/v1/components/%d/motor-fit%s", wiper, tc.query), "bo", nil)
			h.expect(rec, http.StatusOK, &fit)
			// Fitted figures keep four significant digits: no float tails.
			var raw map[string]any
			dec := json.NewDecoder(strings.NewReader(rec.Body.String()))
			dec.UseNumber()
			if err := dec.Decode(&raw); err != nil {
				t.Fatal(err)
			}
			for _, k := range []string{"voltage_v", "stall_a", "resistance_ohm", "kv_rpm_per_v", "ideal_no_load_rpm", "residual_rpm"} {
				num, _ := raw[k].(json.Number)
				mantissa, exponent, _ := strings.Cut(strings.ToLower(string(num)), "e")
				if digits := len(strings.TrimLeft(strings.NewReplacer(".", "", "-", "").Replace(mantissa), "0")); num == "" || digits > 4 || exponent != "" && !strings.HasPrefix(exponent, "+") {
					t.Errorf("%s is %q, want at most four significant digits", k, num)
				}
			}
			within := func(name string, got, want float64) {
				if math.Abs(got-want) > 0.02*want {
					t.Errorf("%s = %g, want %g within 2 %%", name, got, want)
				}
			}
			within("voltage_v", fit.VoltageV, tc.voltage)
			within("stall_a", fit.StallA, tc.stall)
			within("resistance_ohm", fit.ResistanceOhm, tc.r)
			within("kv_rpm_per_v", fit.KvRPMPerV, tc.kv)
			if fit.Points != tc.points || fit.ComponentID != wiper || fit.Stored.StallA == nil || *fit.Stored.StallA != 4.5 {
				t.Errorf("points %d, component %d, stored %+v", fit.Points, fit.ComponentID, fit.Stored)
			}
			if len(fit.Voltages) != 2 || fit.Voltages[0].Points != 2 || fit.Voltages[1].Points != 3 {
				t.Errorf("voltages %+v, want two groups of 2 and 3 readings", fit.Voltages)
			}
		})
	}

	single := addMotor("fan motor")
	measure(single, 12, 0.3, 4000)
	rising := addMotor("odd motor")
	measure(rising, 12, 0.5, 3000)
	measure(rising, 12, 1.5, 4000)
	unfit := []struct {
		name, path, mention string
	}{
		{"one reading", fmt.Sprintf("/v1/components/%d/motor-fit", single), "measure"},
		{"speed rising with current", fmt.Sprintf("/v1/components/%d/motor-fit", rising), "heavier load"},
		{"no readings near the voltage asked", fmt.Sprintf("/v1/components/%d/motor-fit?voltage_v=24", wiper), "12 V (3 readings)"},
		{"one reading at the voltage named", fmt.Sprintf("/v1/components/%d/motor-fit?voltage_v=30", single), "12 V (1 reading)"},
	}
	for _, tc := range unfit {
		t.Run(tc.name, func(t *testing.T) {
			rec := h.call(http.MethodGet, tc.path, "ada", nil)
			h.expect(rec, http.StatusUnprocessableEntity, nil)
			var p Problem
			if err := json.Unmarshal(rec.Body.Bytes(), &p); err != nil || p.Type != ProblemTypePrefix+"motor-fit-needs-readings" ||
				rec.Header().Get("Content-Type") != "application/problem+json" || !strings.Contains(p.Detail, tc.mention) {
				t.Fatalf("problem %s (%s), want the motor-fit problem mentioning %q", rec.Body.String(), rec.Header().Get("Content-Type"), tc.mention)
			}
		})
	}
	h.expect(h.call(http.MethodGet, "/v1/components/4040/motor-fit", "ada", nil), http.StatusNotFound, nil)
	h.expect(h.call(http.MethodGet, fmt.Sprintf("/v1/components/%d/motor-fit?voltage_v=-3", wiper), "ada", nil), http.StatusBadRequest, nil)
	h.expect(h.call(http.MethodGet, fmt.Sprintf("/v1/components/%d/motor-fit", wiper), "", nil), http.StatusUnauthorized, nil)
}
