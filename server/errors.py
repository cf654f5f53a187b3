"""Errors the services raise; the web layers turn them into clear answers."""


class FlarebookError(Exception):
    """A refusal. `keep_record`: what the request wrote so far (the refusal's own audit entry, a
    sign-in throttle row) is committed all the same, by the request's session dependency."""

    status_code = 400

    def __init__(self, message: str, *, keep_record: bool = False):
        super().__init__(message)
        self.message = message
        self.keep_record = keep_record


class NotFound(FlarebookError):
    status_code = 404


class Forbidden(FlarebookError):
    status_code = 403


class Conflict(FlarebookError):
    status_code = 409


class Invalid(FlarebookError):
    status_code = 422


class Unauthorized(FlarebookError):
    status_code = 401
