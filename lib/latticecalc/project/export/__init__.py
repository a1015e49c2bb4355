"""Export: executed notebooks -> one self-contained HTML calc package + JSON of key results."""

from latticecalc.project.export.package import ExportReport, export_project

__all__ = ["ExportReport", "export_project"]
