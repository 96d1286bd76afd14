"""python -m navred"""

from .cli import main

main()
