"""Records: signatures, the audit chain, idempotency keys and backups."""
