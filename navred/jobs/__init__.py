"""The pipelines a command runs (the edge): a job reads through io/, calls the core, and returns
results (`sights.reduce_sights`, `voyage.process_log` for every command that fixes, the day's work,
training records, marking hand workings, routes), with the DataFrame wrappers of the core (`frames`)
and the sharing of work among forked processes (`forking`). The rule: jobs/ may use the core, io/ and
figures/, never the command line; a job raises and warns, and never prints."""
