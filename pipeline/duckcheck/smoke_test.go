package duckcheck

import (
	"database/sql"
	"testing"

	_ "github.com/duckdb/duckdb-go/v2"
)

func TestSmoke(t *testing.T) {
	db, err := sql.Open("duckdb", "")
	if err != nil {
		t.Fatal(err)
	}
	var v string
	if err := db.QueryRow("SELECT version()").Scan(&v); err != nil {
		t.Fatal(err)
	}
	t.Log(v)
}
