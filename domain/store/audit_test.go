package store_test

import (
	"context"
	"encoding/json"
	"strconv"
	"testing"

	"wattshelf/domain"
	"wattshelf/domain/store/storetest"
)

func TestAuditTrailRecordsEveryChange(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)

	c := mustCreate(t, st, memberAda, part("motor", "Fan motor"))
	other := mustCreate(t, st, memberBo, part("fuse", "Glass fuse"))
	if _, err := st.UpdateComponent(ctx, shelfKeeper, c.ID, 1, part("motor", "Fan motor, tested")); err != nil {
		t.Fatal(err)
	}
	m, err := st.AddMeasurement(ctx, memberBo, c.ID, domain.MeasurementInput{VoltageV: 6, CurrentA: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	if err := st.DeleteComponent(ctx, memberAda, c.ID, 2); err != nil {
		t.Fatal(err)
	}

	trail, err := st.AuditTrail(ctx, "component", strconv.FormatInt(c.ID, 10), 50)
	if err != nil {
		t.Fatal(err)
	}
	want := []struct{ actor, action string }{
		{"ada", "component.delete"},
		{"bo", "measurement.create"},
		{"kim", "component.update"},
		{"ada", "component.create"},
	}
	if len(trail) != len(want) {
		t.Fatalf("trail of component %d has %d entries, want %d: %+v", c.ID, len(trail), len(want), trail)
	}
	for i, w := range want {
		e := trail[i]
		if e.Actor != w.actor || e.Action != w.action || e.SubjectType != "component" || e.At.IsZero() {
			t.Errorf("entry %d: %+v, want %s by %s", i, e, w.action, w.actor)
		}
	}
	var detail struct {
		Version     int64 `json:"version"`
		Measurement int64 `json:"measurement"`
	}
	if err := json.Unmarshal(trail[2].Detail, &detail); err != nil || detail.Version != 2 {
		t.Errorf("update detail %s: want the new version 2 (%v)", trail[2].Detail, err)
	}
	if err := json.Unmarshal(trail[1].Detail, &detail); err != nil || detail.Measurement != m.ID {
		t.Errorf("measurement detail %s: want measurement %d (%v)", trail[1].Detail, m.ID, err)
	}

	all, err := st.AuditTrail(ctx, "", "", 50)
	if err != nil || len(all) != 5 {
		t.Fatalf("whole trail: %d entries, %v; want 5", len(all), err)
	}
	if all[0].ID <= all[4].ID {
		t.Errorf("whole trail is not newest first: ids %d … %d", all[0].ID, all[4].ID)
	}
	newest, err := st.AuditTrail(ctx, "", "", 2)
	if err != nil || len(newest) != 2 || newest[0].ID != all[0].ID {
		t.Errorf("limit 2: %+v, %v", newest, err)
	}
	bos, err := st.AuditTrail(ctx, "component", strconv.FormatInt(other.ID, 10), 50)
	if err != nil || len(bos) != 1 || bos[0].Action != "component.create" {
		t.Errorf("trail of the untouched component: %+v, %v", bos, err)
	}
}

// TestFailedChangesLeaveNoAuditRow checks the other half of the
// transaction: a change that fails writes no audit row and no data.
func TestFailedChangesLeaveNoAuditRow(t *testing.T) {
	ctx := context.Background()
	st, dbURL := storetest.NewStore(t)
	conn := rawConn(t, dbURL)
	c := mustCreate(t, st, memberAda, part("driver", "H-bridge"))

	negative := part("driver", "negative stock")
	negative.Quantity = -1 // the store relies on the table's CHECK, not validation, here
	attempts := map[string]func() error{
		"stale update":          func() error { _, err := st.UpdateComponent(ctx, memberAda, c.ID, 7, part("driver", "x")); return err },
		"forbidden update":      func() error { _, err := st.UpdateComponent(ctx, memberBo, c.ID, 1, part("driver", "x")); return err },
		"forbidden delete":      func() error { return st.DeleteComponent(ctx, memberBo, c.ID, 0) },
		"insert breaking CHECK": func() error { _, err := st.CreateComponent(ctx, memberAda, negative); return err },
		"update breaking CHECK": func() error { _, err := st.UpdateComponent(ctx, memberAda, c.ID, 1, negative); return err },
		"measure missing part": func() error {
			_, err := st.AddMeasurement(ctx, memberAda, c.ID+99, domain.MeasurementInput{VoltageV: 1})
			return err
		},
		"revoke unknown user":    func() error { _, err := st.RevokeTokens(ctx, "host-cli", "nobody"); return err },
		"token for invalid role": func() error { _, err := st.CreateToken(ctx, "host-cli", "x", "root"); return err },
	}
	for name, attempt := range attempts {
		if err := attempt(); err == nil {
			t.Errorf("%s succeeded", name)
		}
	}
	if n := countRows(t, conn, `SELECT count(*) FROM audit`); n != 1 {
		t.Errorf("%d audit rows after one create and only failed changes, want 1", n)
	}
	if n := countRows(t, conn, `SELECT count(*) FROM components`); n != 1 {
		t.Errorf("%d components, want 1", n)
	}
	if got, _ := st.Component(ctx, c.ID); got.Version != 1 || got.Name != "H-bridge" {
		t.Errorf("failed changes altered the component: %+v", got)
	}
}

// TestChangeRollsBackWhenItsAuditRowFails makes the audit insert fail
// for one action and checks that the change it belongs to is undone.
func TestChangeRollsBackWhenItsAuditRowFails(t *testing.T) {
	ctx := context.Background()
	st, dbURL := storetest.NewStore(t)
	conn := rawConn(t, dbURL)
	c := mustCreate(t, st, memberAda, part("camera", "Doorbell camera board"))

	if _, err := conn.Exec(ctx, `ALTER TABLE audit ADD CONSTRAINT refuse_for_test
		CHECK (action NOT IN ('component.create', 'component.update', 'component.delete', 'measurement.create', 'token.create'))
		NOT VALID`); err != nil { // NOT VALID: the create above keeps its audit row
		t.Fatal(err)
	}
	if _, err := st.CreateComponent(ctx, memberAda, part("camera", "Webcam board")); err == nil {
		t.Error("create succeeded although its audit row was refused")
	}
	if n := countRows(t, conn, `SELECT count(*) FROM components`); n != 1 {
		t.Errorf("%d components after a refused create, want the 1 from before", n)
	}
	if _, err := st.UpdateComponent(ctx, memberAda, c.ID, 1, part("camera", "renamed")); err == nil {
		t.Error("update succeeded although its audit row was refused")
	}
	if err := st.DeleteComponent(ctx, memberAda, c.ID, 1); err == nil {
		t.Error("delete succeeded although its audit row was refused")
	}
	if _, err := st.AddMeasurement(ctx, memberAda, c.ID, domain.MeasurementInput{VoltageV: 5, CurrentA: 0.2}); err == nil {
		t.Error("measurement stored although its audit row was refused")
	}
	if _, err := st.CreateToken(ctx, "host-cli", "ada", domain.RoleMember); err == nil {
		t.Error("token created although its audit row was refused")
	}
	// Still there, unchanged: neither the update nor the delete took.
	got, err := st.Component(ctx, c.ID)
	if err != nil || got.Version != 1 || got.Name != "Doorbell camera board" {
		t.Errorf("component after refused changes: %+v, %v", got, err)
	}
	for _, table := range []string{"measurements", "tokens", "users"} {
		if n := countRows(t, conn, `SELECT count(*) FROM `+table); n != 0 {
			t.Errorf("%d rows in %s after their audit rows were refused", n, table)
		}
	}
}
