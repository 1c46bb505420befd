"""Pure numpy/scipy functions: numbers in, numbers out. No findings, no files, no printing."""
