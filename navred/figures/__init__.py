"""The pictures (the edge): navred's light vector canvas (`drawing`, SVG or PNG through Pillow) and
what is drawn on it, the plotting sheet, the series and voyage pictures, the sky picture (`plotting`,
matplotlib imported lazily). The rule: figures/ may use the core and io/ (to write a picture), never
the jobs or the command line; a figure is drawn from results given to it."""
