"""Flarebook: practice-autorotation training records for helicopter schools."""
