"""Logbook: sorties and the practice autorotations flown in them."""
