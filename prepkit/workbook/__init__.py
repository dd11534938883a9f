"""workbook subpackage."""
