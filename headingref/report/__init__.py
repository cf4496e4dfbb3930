from .build import REPORT_FILE, ReportResult, build_report

__all__ = ["REPORT_FILE", "ReportResult", "build_report"]
