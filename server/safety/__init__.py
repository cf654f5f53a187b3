"""The safety digest: where practice autorotations go wrong, by instructor, aircraft, site, conditions and month."""
