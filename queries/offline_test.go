package queries

import (
	"context"
	"net"
	"strings"
	"sync"
	"testing"

	"github.com/sondeclim/sondeclim/schema"
)

// TestOpenIsOffline: a database from Open does not install or load
// extensions by itself, INSTALL from the default or any http repository
// makes no network connection (a listener on the loopback stands in for
// the network: DuckDB's HTTP requests honour http_proxy, which the test
// points at it before the settings are locked, to see that no request is
// made), and SQL cannot turn the settings back on.
func TestOpenIsOffline(t *testing.T) {
	dir := t.TempDir()
	if _, err := schema.WriteTable(dir, "things", []struct {
		StationID string `col:"station_id" doc:"id"`
		Year      int32  `col:"year" doc:"year"`
	}{{"A", 2001}}); err != nil {
		t.Fatal(err)
	}
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	defer ln.Close()
	var mu sync.Mutex
	var got []string
	go func() {
		for {
			c, err := ln.Accept()
			if err != nil {
				return
			}
			b := make([]byte, 200)
			n, _ := c.Read(b)
			mu.Lock()
			got = append(got, string(b[:n]))
			mu.Unlock()
			c.Close()
		}
	}()
	db, err := Open(context.Background(), dir)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	db.SetMaxOpenConns(3)
	for _, set := range []string{"autoinstall_known_extensions", "autoload_known_extensions", "allow_community_extensions"} {
		var v string
		if err := db.QueryRow("select current_setting('" + set + "')::varchar").Scan(&v); err != nil || v != "false" {
			t.Errorf("%s = %q, %v; want false", set, v, err)
		}
	}
	for _, q := range []string{
		"SET autoinstall_known_extensions = true",
		"SET http_proxy = '" + ln.Addr().String() + "'",
		"SET lock_configuration = false",
	} {
		if _, err := db.Exec(q); err == nil || !strings.Contains(err.Error(), "locked") {
			t.Errorf("%s: %v, want refused (configuration locked)", q, err)
		}
	}
	for _, q := range []string{
		"INSTALL httpfs",
		"INSTALL httpfs FROM core",
		"INSTALL httpfs FROM 'http://" + ln.Addr().String() + "'",
		"select * from read_csv('https://example.invalid/x.csv')",
	} {
		if _, err := db.Exec(q); err == nil {
			t.Errorf("%s succeeded, want an error", q)
		}
	}
	// Even the explicit repository, the listener itself, is not reached:
	// every request goes to the closed proxy port.
	mu.Lock()
	defer mu.Unlock()
	if len(got) > 0 {
		t.Errorf("DuckDB made %d requests to the listener, want none: %q", len(got), got)
	}
	// The views still work on every connection.
	for range 3 {
		var n int
		if err := db.QueryRow("select count(*) from things").Scan(&n); err != nil || n != 1 {
			t.Errorf("count = %d, %v", n, err)
		}
	}
}
