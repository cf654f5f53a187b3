"""Currency: rules that keep pilots in date, and their evaluation."""
