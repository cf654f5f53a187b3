"""Fleet: the school, helicopter types, aircraft and practice sites."""
