"""Site files, inspection-campaign readers, unit handling and the ledger.

This package knows nothing about reliability; it turns what the lab and the
survey team sent into canonical, checked observations.
"""
