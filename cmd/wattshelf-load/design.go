package main

import (
	"fmt"

	"github.com/go-json-experiment/json"
)

// reviewDesign builds a valid format-1 design of
// exactly nodes nodes, at least 10: a 4-cell LiFePO4 pack feeding two
// motor drivers with two gear motors each, a lamp, and a 5 V buck rail
// with a 3.3 V linear rail below it; the remaining nodes are small loads
// shared between the two rails, drawing less each as there are more of
// them so that no rail is overloaded at any size. The figures are
// invented but plausible, so the review does real work on every check.
func reviewDesign(name string, nodes int) []byte {
	nodes = max(nodes, 10)
	type m = map[string]any
	wire := func(gauge string, length float64) m { return m{"gauge": gauge, "length_m": length} }
	list := []m{
		{"id": "pack", "type": "battery", "chemistry": "lifepo4", "series": 4, "parallel": 1,
			"cell_capacity_mah": 3000, "max_discharge_a": 15},
		{"id": "lamp", "type": "load", "min_v": 9, "max_v": 15, "current_a": 0.6, "duty": 0.5,
			"feed": m{"from": "pack", "wire": wire("20AWG", 0.6),
				"fuse": m{"rating_a": 1, "speed": "slow", "family": "blade", "distance_from_source_m": 0.12}}},
		{"id": "buck5", "type": "regulator", "topology": "buck", "output_v": 5, "max_output_a": 2,
			"efficiency": 0.88, "min_input_v": 7, "max_input_v": 28, "quiescent_a": 0.002,
			"feed": m{"from": "pack", "wire": wire("22AWG", 0.3),
				"fuse": m{"rating_a": 2, "speed": "fast", "family": "blade", "distance_from_source_m": 0.08}}},
		{"id": "ldo3v3", "type": "regulator", "topology": "linear", "output_v": 3.3, "max_output_a": 0.5,
			"dropout_v": 0.4, "quiescent_a": 0.005, "theta_ja_c_per_w": 60, "tj_max_c": 125,
			"feed": m{"from": "buck5", "wire": wire("24AWG", 0.1)}},
	}
	for d := 1; d <= 2; d++ {
		drv := fmt.Sprintf("drive%d", d)
		list = append(list, m{"id": drv, "type": "driver", "max_input_v": 30, "continuous_a": 3, "peak_a": 6,
			"quiescent_a": 0.005,
			"feed": m{"from": "pack", "wire": m{"gauge": "18AWG", "length_m": 0.4, "insulation_c": 105, "bundled": 2},
				"fuse":       m{"rating_a": 5, "speed": "slow", "family": "blade", "distance_from_source_m": 0.1},
				"connectors": []m{{"family": "xt30"}}}})
		for w := 1; w <= 2; w++ {
			list = append(list, m{"id": fmt.Sprintf("motor%d%d", d, w), "type": "motor", "rated_v": 12,
				"no_load_a": 0.15, "stall_a": 2, "min_v": 6, "max_v": 15, "duty": 0.3,
				"feed": m{"from": drv, "wire": wire("20AWG", 0.5)}})
		}
	}
	// Boards share 0.6 A of the 5 V rail's 2 A (1.2 A in surges), sensors
	// 0.3 A of the 3.3 V rail's 0.5 A; up to 20 boards and 60 sensors draw
	// 30 and 5 mA each, as every design of 30 nodes does.
	extra := nodes - len(list)
	boards, sensors := float64((extra+1)/2), float64(extra/2)
	boardA, sensorA := min(0.03, 0.6/max(boards, 1)), min(0.005, 0.3/max(sensors, 1))
	for i := 0; len(list) < nodes; i++ {
		if i%2 == 0 {
			list = append(list, m{"id": fmt.Sprintf("board%d", i), "type": "load", "min_v": 4.5, "max_v": 5.5,
				"current_a": boardA, "peak_a": 2 * boardA, "feed": m{"from": "buck5", "wire": wire("24AWG", 0.2)}})
		} else {
			list = append(list, m{"id": fmt.Sprintf("sensor%d", i), "type": "load", "min_v": 3.0, "max_v": 3.6,
				"current_a": sensorA, "duty": 0.5, "feed": m{"from": "ldo3v3", "wire": wire("26AWG", 0.3)}})
		}
	}
	doc, err := json.Marshal(m{"format": 1, "name": name, "ambient_c": 25, "target_runtime_h": 1, "nodes": list},
		json.Deterministic(true))
	if err != nil {
		panic(err) // maps of plain values always encode
	}
	return doc
}
