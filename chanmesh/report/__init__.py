"""Pictures and the build report: plan view, 3D mesh view, quality charts, ``report.html``."""

from chanmesh.report.html import REPORT, report_html, write_report

__all__ = ["REPORT", "report_html", "write_report"]
