"""People: accounts, roles, sign-in sessions and API tokens."""
