"""The comparison report: figures, a plain document model, and its HTML, Markdown, PDF, CSV and
JSON-manifest writers. Start from :func:`saltbench.report.writer.make_report`; nothing heavy is
imported until a report is written."""
