"""Trends, proficiency and the progress file."""
