"""The pictures (the edge): navred's light vector canvas (`drawing`, SVG or PNG through Pillow) and
what is drawn on it: the plotting sheet, the voyage and series pictures, the sky picture (`plotting`,
matplotlib imported lazily), a sight series against its curve (`series`), a training report's pictures
(`training`) and the blank forms of the printed backup (`paperforms`). The rule: figures/ may use the core and
io/ (to write a picture), never the jobs or the command line; a figure is drawn from results given to it."""
