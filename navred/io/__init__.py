"""The readers and writers of files (the edge): every file a user gives is read here, bounded and
checked row by row (`readers`, the sight log's one way in `logbook`, tracks, the deviation card, the
rating log), and every file navred writes goes out through here (`output`, the workbook, GPX and
GeoJSON). The rule: io/ may use the core and the figures, never the jobs or the command line; it
raises navred's errors and never prints."""
