"""Accounts and access: users, passwords, sessions and tokens, roles and permissions, throttling."""
