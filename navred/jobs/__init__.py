"""What a command does (the edge): a job reads through io/, calls the core and returns a result built once, a
frozen dataclass (`sights.reduce_sights`, `voyage.process_log` for every command that fixes, `fixing`,
`reducing`, the day's work, training records, marking hand workings, routes, the bridge plan, the paper), and
holds what that result is written as (the voyage's workbook, GPX and plot files), with the DataFrame wrappers of
the core (`frames`) and the sharing of work among forked processes (`forking`). The rule: jobs/ may use the
core, io/ and figures/, never the command line; a job raises and warns, and never prints."""
