package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io/fs"
	"log/slog"
	"path"
	"slices"

	"wattshelf"
	"wattshelf/domain/store"
)

// Demo records belong to invented people, so nobody mistakes them for a
// real member's work.
const (
	demoShelfKeeper = "demo-shelf-keeper"
	demoMember      = "demo-member"
)

// loadDemo reads the invented demo scenario embedded in the binary.
func loadDemo() (store.DemoData, error) {
	demo := store.DemoData{ShelfKeeper: demoShelfKeeper}
	raw, err := fs.ReadFile(wattshelf.DemoFiles, "testdata/demo/components.json")
	if err != nil {
		return demo, fmt.Errorf("read demo shelf: %w", err)
	}
	if err := json.Unmarshal(raw, &demo.Components); err != nil {
		return demo, fmt.Errorf("decode demo shelf: %w", err)
	}
	for i := range demo.Components {
		demo.Components[i].Defaults()
		if err := demo.Components[i].Validate(); err != nil {
			return demo, fmt.Errorf("demo component %d: %w", i, err)
		}
	}
	names, err := fs.Glob(wattshelf.DemoFiles, "testdata/demo/designs/*.json")
	if err != nil {
		return demo, fmt.Errorf("list demo designs: %w", err)
	}
	slices.Sort(names)
	for _, name := range names {
		doc, err := fs.ReadFile(wattshelf.DemoFiles, name)
		if err != nil {
			return demo, fmt.Errorf("read demo design %s: %w", name, err)
		}
		var head struct {
			Name string `json:"name"`
		}
		if err := json.Unmarshal(doc, &head); err != nil || head.Name == "" {
			head.Name = path.Base(name)
		}
		demo.Designs = append(demo.Designs, store.DemoDesign{Name: head.Name, Owner: demoMember, Document: doc})
	}
	return demo, nil
}

// seedDemo loads the demo scenario when the database is empty.
func seedDemo(ctx context.Context, st *store.Store, logger *slog.Logger) error {
	demo, err := loadDemo()
	if err != nil {
		return err
	}
	seeded, err := st.SeedDemo(ctx, demo)
	if err != nil {
		return fmt.Errorf("seed demo data: %w", err)
	}
	if seeded {
		logger.Info("loaded demo data", "components", len(demo.Components), "designs", len(demo.Designs))
	} else {
		logger.Info("database already holds data; demo not loaded")
	}
	return nil
}

// prepareData makes sure the stored data the service needs is present:
// always the default limits as version 1, and the demo when asked.
func prepareData(ctx context.Context, st *store.Store, demo bool, logger *slog.Logger) error {
	seeded, err := st.SeedDefaultLimits(ctx)
	if err != nil {
		return fmt.Errorf("store default limits: %w", err)
	}
	if seeded {
		logger.Info("stored the default limits as version 1")
	}
	if demo {
		return seedDemo(ctx, st, logger)
	}
	return nil
}
