package store_test

import (
	"context"
	"errors"
	"testing"
	"time"

	"wattshelf/domain"
	"wattshelf/domain/store/storetest"
)

func TestMeasurements(t *testing.T) {
	ctx := context.Background()
	st, dbURL := storetest.NewStore(t)
	conn := rawConn(t, dbURL)
	motor := mustCreate(t, st, shelfKeeper, part("motor", "Toy car motor"))
	idle := mustCreate(t, st, shelfKeeper, part("motor", "Unmeasured motor"))

	if list, err := st.Measurements(ctx, idle.ID); err != nil || len(list) != 0 {
		t.Fatalf("unmeasured component: %v, %v", list, err)
	}

	before := time.Now().Add(-time.Minute)
	readings := []domain.MeasurementInput{
		{VoltageV: 3, CurrentA: 0.25, SpeedRPM: volts(9800), Note: "free running"},
		{VoltageV: 3, CurrentA: 1.1, SpeedRPM: volts(6100)},
		{VoltageV: 3, CurrentA: 2.4}, // no speed: shaft held
	}
	// Members may measure a part staff own; the reading is theirs.
	var ids []int64
	for _, in := range readings {
		m, err := st.AddMeasurement(ctx, memberAda, motor.ID, in)
		if err != nil {
			t.Fatal(err)
		}
		if m.ComponentID != motor.ID || m.RecordedBy != "ada" || m.RecordedAt.Before(before) || m.ID < 1 {
			t.Errorf("stored reading %+v", m)
		}
		ids = append(ids, m.ID)
	}

	list, err := st.Measurements(ctx, motor.ID)
	if err != nil {
		t.Fatal(err)
	}
	if len(list) != 3 {
		t.Fatalf("%d readings, want 3", len(list))
	}
	for i, m := range list {
		in := readings[i]
		if m.ID != ids[i] || m.VoltageV != in.VoltageV || m.CurrentA != in.CurrentA || m.Note != in.Note {
			t.Errorf("reading %d: %+v, want %+v in the order taken", i, m, in)
		}
		if (m.SpeedRPM == nil) != (in.SpeedRPM == nil) || (m.SpeedRPM != nil && *m.SpeedRPM != *in.SpeedRPM) {
			t.Errorf("reading %d speed %v, want %v", i, m.SpeedRPM, in.SpeedRPM)
		}
	}

	if _, err := st.AddMeasurement(ctx, memberAda, 999999, readings[0]); !errors.Is(err, domain.ErrNotFound) {
		t.Errorf("measuring a missing component: %v, want not found", err)
	}
	if _, err := st.Measurements(ctx, 999999); !errors.Is(err, domain.ErrNotFound) {
		t.Errorf("readings of a missing component: %v, want not found", err)
	}

	// Readings go with their component.
	if err := st.DeleteComponent(ctx, shelfKeeper, motor.ID, 0); err != nil {
		t.Fatal(err)
	}
	if n := countRows(t, conn, `SELECT count(*) FROM measurements`); n != 0 {
		t.Errorf("%d readings outlive their component", n)
	}
}
