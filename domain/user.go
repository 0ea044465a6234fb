package domain

import "time"

// Role decides what a token may do: members keep their own records, staff
// keep everything, including limits and tokens.
type Role string

const (
	RoleMember Role = "member"
	RoleStaff  Role = "staff"
)

// Valid reports whether r is one of the known roles.
func (r Role) Valid() bool { return r == RoleMember || r == RoleStaff }

// User is the person behind a token. Records are owned by user name.
type User struct {
	ID   int64  `json:"id"`
	Name string `json:"name"`
	Role Role   `json:"role"`
}

// MayChange reports whether u may change or delete a record owned by owner.
func (u User) MayChange(owner string) bool {
	return u.Role == RoleStaff || u.Name == owner
}

// TokenInfo describes a token without its secret.
type TokenInfo struct {
	Name      string     `json:"name"`
	Role      Role       `json:"role"`
	CreatedAt time.Time  `json:"created_at"`
	LastUsed  *time.Time `json:"last_used,omitempty"`
	RevokedAt *time.Time `json:"revoked_at,omitempty"`
}
