"""The comparison report: figures, a plain document model, and its HTML, Markdown, PDF, CSV and
JSON-manifest writers. Start from :func:`saltbench.api.make_report` (which compares, then calls
:func:`saltbench.report.writer.write_report`); nothing heavy is imported until a report is written."""
