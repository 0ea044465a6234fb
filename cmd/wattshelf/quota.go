package main

import (
	"context"
	"flag"
	"fmt"
	"io"

	"wattshelf/domain/store"
)

const quotaUsage = "usage: wattshelf quota show | set [--reviews-per-hour N] [--designs N] [--stored-bytes N]"

// quotaCommand shows or changes the per-member quotas every replica reads
// from the database. set changes only the quotas it is given.
func quotaCommand(ctx context.Context, args []string, env environment, stdout io.Writer) error {
	if len(args) == 0 {
		return &exitError{code: 2, msg: quotaUsage}
	}
	fs := flag.NewFlagSet("quota set", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	reviews := fs.Int("reviews-per-hour", 0, "stored reviews a member may make in an hour")
	designs := fs.Int("designs", 0, "designs a member may keep")
	bytes := fs.Int64("stored-bytes", 0, "bytes of designs and stored reviews a member may keep")
	switch args[0] {
	case "show":
		if len(args) != 1 {
			return &exitError{code: 2, msg: quotaUsage}
		}
	case "set":
		if err := fs.Parse(args[1:]); err != nil || fs.NArg() != 0 || fs.NFlag() == 0 {
			return &exitError{code: 2, msg: quotaUsage}
		}
	default:
		return &exitError{code: 2, msg: quotaUsage}
	}
	st, err := env.openMigrated(ctx)
	if err != nil {
		return err
	}
	defer st.Close()
	q, err := st.Quotas(ctx)
	if err != nil {
		return err
	}
	if args[0] == "set" {
		fs.Visit(func(f *flag.Flag) {
			switch f.Name {
			case "reviews-per-hour":
				q.ReviewsPerHour = *reviews
			case "designs":
				q.Designs = *designs
			case "stored-bytes":
				q.StoredBytes = *bytes
			}
		})
		if err := q.Validate(); err != nil {
			return &exitError{code: 2, msg: err.Error()}
		}
		if err := st.SetQuotas(ctx, hostActor, q); err != nil {
			return err
		}
	}
	fmt.Fprintf(stdout, "%s %d\n%s %d\n%s %d\n", store.QuotaReviewsPerHour, q.ReviewsPerHour,
		store.QuotaDesigns, q.Designs, store.QuotaStoredBytes, q.StoredBytes)
	return nil
}
