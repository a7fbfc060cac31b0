package duckcheck

import (
	"fmt"
	"os"
	"strings"
	"testing"
)

func TestScratch(t *testing.T) {
	q := os.Getenv("Q")
	if q == "" {
		t.Skip()
	}
	ready(t)
	for _, s := range strings.Split(q, ";;") {
		rows, err := db.Query(s)
		if err != nil {
			fmt.Println("ERR", err)
			continue
		}
		cols, _ := rows.Columns()
		fmt.Println(strings.Join(cols, " | "))
		for rows.Next() {
			v := make([]any, len(cols))
			p := make([]any, len(cols))
			for i := range v {
				p[i] = &v[i]
			}
			rows.Scan(p...)
			var b []string
			for _, x := range v {
				b = append(b, fmt.Sprint(x))
			}
			fmt.Println(strings.Join(b, " | "))
		}
		fmt.Println("--")
	}
}
