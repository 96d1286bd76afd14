"""The formats (the edge): every file a user gives is read here, bounded and checked row by row (`readers`, the
sight log's one way in `logbook` with its cells, time working, DR carry and fix groups, tracks, the deviation
card, the rating log, hand workings), and every kind of file navred writes has its writer here (`output`, the
workbook's style, `exports` for GPX and GeoJSON, `printed` for PDF pages, `labels` for the words a sheet shows).
The rule: io/ may use the core and the figures, never the jobs or the command line; it raises navred's errors
and never prints."""
