"""steamcell's spreadsheet functions for LibreOffice Calc, without UNO: argument rules
(`cells`), the engine (`engine`: the embedded steamcell child or a team server) and the
functions by role (`functions`). The UNO component `steamcell_calc.py` is the thin layer Calc
calls; `table.py` is generated from clients/functions.json."""
