"""Errors the services raise; the web layers turn them into clear answers."""


class FlarebookError(Exception):
    status_code = 400

    def __init__(self, message: str):
        super().__init__(message)
        self.message = message


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
