"""Assessment report: HTML document builder, plots and the two-file writer.

- `ReportDocument` / `Section`: build a self-contained HTML report (inline CSS,
  figures embedded as PNG data URIs, all text escaped, the standing caution at
  the top and at the end).
- `assess.report.plots`: the report's figures (prior vs posterior, beta before
  and after updating, beta(t), preposterior beta, beta history).
- `write_report`: writes the HTML and a JSON of all numbers, never overwriting.
"""

from assess.report.document import ReportDocument, Section, format_value
from assess.report.writer import SCHEMA_VERSION, report_paths, to_json_native, write_report

__all__ = [
    "ReportDocument", "Section", "format_value",
    "write_report", "report_paths", "to_json_native", "SCHEMA_VERSION",
]
