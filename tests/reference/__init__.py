"""Checks against published sources (each test names its source beside the check)."""
