"""A notebook session with busyhour, as a plain script (each block is a
cell): size a trunk group by formula and by simulation, run a scenario
written as a dict, and plot a load sweep from its DataFrame.

    python python/examples/notebook.py

Needs pandas for the frames; matplotlib is optional (without it the plot
is skipped with a message). Settings are invented.
"""

import busyhour as bh

# %% Size by the book: 12 erlangs offered at a 1% grade of service.
print("Erlang B servers for 12 E at 1%:", bh.erlang_b_servers(traffic=12.0, grade=0.01))

# %% The scenario as a dict of the file's shape (a TOML file works too).
office = {
    "title": "Office trunks (invented)",
    "simulation": {"warmup": "30m", "length": "2h", "replications": 20, "seed": 7},
    "group": [{"name": "trunks", "servers": 20}],
    "stream": [
        {
            "name": "office",
            "arrivals": {"law": "poisson", "rate": "240/h"},
            "holding": {"law": "lognormal", "mean": "3m", "cv": 1.4},
            "route": ["trunks"],
        }
    ],
}

# %% Size by simulation: the fewest trunks for at most 1% loss.
sized = bh.size(office, group="trunks", goals="loss<=1%")
print("simulated:", sized.servers, "trunks; formula:", sized.formula_servers)

# %% Run it and read the figures as a tidy frame.
result = bh.run(office)
frame = result.to_frame()
print(frame[["kind", "name", "figure", "mean", "half_width", "formula_value"]].to_string(index=False))

# %% Sweep the load and plot the loss with its 95% band beside Erlang B.
swept = bh.sweep(office, scale="0.8:1.6:0.1", figures=["loss"], replications=10).to_frame()
loss = swept[(swept["kind"] == "stream") & swept["interval_start_s"].isna()]
try:
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
except ImportError:
    print("matplotlib is not installed: the plot is skipped (pip install matplotlib)")
else:
    fig, ax = plt.subplots(figsize=(7, 4))
    ax.plot(loss["value"], loss["mean"], marker="o", label="simulated loss")
    ax.fill_between(loss["value"], loss["low"], loss["high"], alpha=0.25, label="95% interval")
    ax.plot(loss["value"], loss["formula_value"], linestyle="--", label="Erlang B")
    ax.set_xlabel("load scale (x forecast)")
    ax.set_ylabel("loss (share of calls)")
    ax.legend()
    fig.savefig("sweep-loss.png", dpi=120, bbox_inches="tight")
    print("plot written to sweep-loss.png")

print(bh.CAUTION)
