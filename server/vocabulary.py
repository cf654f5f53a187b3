"""The trade's words the whole product shares: kinds of autorotation, how they end, and roles.

One place for the codes and their labels; templates get the labels from here through `server.web`.
"""
from typing import Literal

MANEUVERS = ("straight_in", "turn_180", "turn_360", "hovering")
MANEUVER_LABELS = {
    "straight_in": "Straight-in",
    "turn_180": "180° turn",
    "turn_360": "360° turn",
    "hovering": "Hovering",
}
TERMINATIONS = ("power_recovery", "to_hover", "touchdown")
TERMINATION_LABELS = {
    "power_recovery": "Power recovery",
    "to_hover": "To a hover",
    "touchdown": "Full touchdown",
}
Maneuver = Literal["straight_in", "turn_180", "turn_360", "hovering"]
Termination = Literal["power_recovery", "to_hover", "touchdown"]

ROLES = ("student", "instructor", "chief_pilot", "admin")
ROLE_LABELS = {
    "student": "Student",
    "instructor": "Instructor",
    "chief_pilot": "Chief pilot",
    "admin": "Administrator",
}
