"""``calcsheet watch``: rebuild what an engineer saves (targets.py says what is watched and what a change means,
loop.py waits for changes with watchfiles, rebuild.py runs one round through the build's own loop, stopping.py
turns SIGINT and SIGTERM into a clean stop), and optionally serve the HTML pages over loopback so that an open page
reloads itself when it is rebuilt (serve.py, page_reload.py)."""
