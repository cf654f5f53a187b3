"""Recorded flight tracks attached to sorties, and the practice autorotations found in them."""
