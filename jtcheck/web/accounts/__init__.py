"""Accounts: signing in and out, the user's own account and API tokens, user management, password hashing."""
