"""Pure flying computations: plain numbers and dataclasses in and out, no web or database."""
