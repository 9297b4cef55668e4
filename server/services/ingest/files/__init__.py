"""Reading upload bytes (CSV, XLSX, JSON rows) into tables of cells, and cell values."""
