"""Every kind of signed record and its check, in one place, for `audit verify`, `backup` and `restore`."""
from server.logbook.proof import check_signed_sorties
from server.progress.proof import check_signed_stage_checks

RECORD_CHECKS = (check_signed_sorties, check_signed_stage_checks)
