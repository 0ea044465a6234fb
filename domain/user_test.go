package domain

import "testing"

func TestRoles(t *testing.T) {
	for _, tt := range []struct {
		role  Role
		valid bool
	}{{RoleMember, true}, {RoleStaff, true}, {"", false}, {"admin", false}, {"Staff", false}} {
		if got := tt.role.Valid(); got != tt.valid {
			t.Errorf("Role(%q).Valid() = %t, want %t", tt.role, got, tt.valid)
		}
	}
}

func TestMayChange(t *testing.T) {
	ada := User{Name: "ada", Role: RoleMember}
	staff := User{Name: "kim", Role: RoleStaff}
	for _, tt := range []struct {
		who   User
		owner string
		may   bool
	}{
		{ada, "ada", true},
		{ada, "bo", false},
		{ada, "kim", false},
		{ada, "", false},
		{staff, "ada", true},
		{staff, "kim", true},
	} {
		if got := tt.who.MayChange(tt.owner); got != tt.may {
			t.Errorf("%s (%s) MayChange(%q) = %t, want %t", tt.who.Name, tt.who.Role, tt.owner, got, tt.may)
		}
	}
}
