package main

import (
	"context"

	"github.com/sondeclim/sondeclim/schema"
)

func init() {
	register("schema", "print the store's tables and columns (units, meaning) as Markdown", func(e env) command { return &schemaCmd{env: e} })
}

// schemaCmd prints the schema document.
type schemaCmd struct {
	env
}

func (c *schemaCmd) Run(ctx context.Context, args []string) error {
	fs := newFlags("schema", "", `
Print the store's schema as Markdown: every table, what one row is, and
every column with its type, whether it can be null, its unit and meaning.
The same descriptions are stored in each Parquet file's schema.`,
		`  sondeclim schema > SCHEMA.md`, c.stderr)
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	docs, err := schema.Tables()
	if err != nil {
		return err
	}
	return schema.Markdown(c.stdout, docs...)
}
