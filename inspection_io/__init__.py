"""Site files, inspection-campaign readers, unit handling and the ledger.

This package knows nothing about reliability; it turns what the lab and the
survey team sent into canonical, checked observations.
"""

from inspection_io.readers import ReadResult, detect_kind, read_campaign_file  # noqa: E402

__all__ = ["ReadResult", "detect_kind", "read_campaign_file"]
