package domain

import "strconv"

// CountOf writes n and the noun for n of it: "1 review", "3 reviews".
func CountOf(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return strconv.Itoa(n) + " " + many
}
