"""Site files, inspection-campaign readers, unit handling and the ledger.

This package knows nothing about reliability; it turns what the lab and the
survey team sent into canonical, checked observations.
"""

__all__ = ["ReadResult", "detect_kind", "read_campaign_file"]


def __getattr__(name):
    # Lazy: importing the error types must not pull in pandas and the readers.
    if name in __all__:
        from inspection_io import readers

        return getattr(readers, name)
    raise AttributeError(f"module 'inspection_io' has no attribute {name!r}")
