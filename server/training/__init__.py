"""Training: programs (syllabi), standards, enrolment and progress."""
