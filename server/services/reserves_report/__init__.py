"""The reserves report of a review (issue 15): the PDF (content, static SVG charts, WeasyPrint)
and the workbook (XLSX), both built from the review's read model (``reserves.views``)."""
