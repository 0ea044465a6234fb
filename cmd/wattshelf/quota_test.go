package main

import (
	"context"
	"testing"

	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

func TestQuotaCommands(t *testing.T) {
	ctx := context.Background()
	st, dbURL := storetest.NewStore(t)
	getenv := cliEnv(dbURL)

	// The migration's defaults, as the README lists them.
	stdout, stderr, err := runCLI(ctx, getenv, "quota", "show")
	if want := "reviews_per_hour 120\ndesigns 200\nstored_bytes 268435456\n"; err != nil || stdout != want {
		t.Fatalf("show: %q, %v (%s); want %q", stdout, err, stderr, want)
	}
	// set changes only what it is given.
	stdout, stderr, err = runCLI(ctx, getenv, "quota", "set", "--reviews-per-hour", "30", "--stored-bytes", "1000000")
	if want := "reviews_per_hour 30\ndesigns 200\nstored_bytes 1000000\n"; err != nil || stdout != want {
		t.Fatalf("set: %q, %v (%s); want %q", stdout, err, stderr, want)
	}
	if q, err := st.Quotas(ctx); err != nil || q != (store.Quotas{ReviewsPerHour: 30, Designs: 200, StoredBytes: 1000000}) {
		t.Fatalf("stored quotas %+v, %v", q, err)
	}
	for _, args := range [][]string{
		{"quota"}, {"quota", "set"}, {"quota", "show", "extra"}, {"quota", "raise"},
		{"quota", "set", "--reviews-per-hour", "0"}, {"quota", "set", "--designs", "-1"},
		{"quota", "set", "--stored-bytes", "lots"},
	} {
		if _, _, err := runCLI(ctx, getenv, args...); exitCode(err) != 2 {
			t.Errorf("%v: %v, want a usage error", args, err)
		}
	}
	if q, err := st.Quotas(ctx); err != nil || q.ReviewsPerHour != 30 || q.Designs != 200 {
		t.Fatalf("quotas after refused changes %+v, %v: want them unchanged", q, err)
	}
}
