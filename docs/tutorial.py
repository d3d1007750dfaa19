# %% [markdown]
# # Tutorial: a scene under version control
#
# A percent-script: run it as it is (`python docs/tutorial.py`), or open it as a notebook
# (editors that read `# %%` cells, or `jupytext --to notebook docs/tutorial.py`). The test
# suite executes it (`tests/test_tutorial.py`), so every step here works with this version
# of tracer. It uses small ray counts so that it runs in a few seconds.
#
# We load a demo scene, trace it, read its ghost table, sweep the plate thickness, and
# then change the scene in a git repository and ask `tracer diff` what the change did.

# %%
import os
import shutil
import subprocess
import tempfile
from pathlib import Path

import tracer
from tracer.analysis import analyse, run_summary

try:
    HERE = Path(__file__).resolve().parent
except NameError:  # a notebook has no __file__: run it from the docs/ folder
    HERE = Path.cwd()
SCENES = HERE.parent / "scenes"
work = Path(tempfile.mkdtemp(prefix="tracer-tutorial-"))

# %% [markdown]
# ## 1. Load
# `tracer.load` validates the whole file and reports every problem with its key path. In a
# notebook the scene shows itself as tables and a section drawing.

# %%
scene = tracer.load(SCENES / "plate_ghost.toml")
print(scene.title, "-", list(scene.solids), list(scene.detectors))
scene  # noqa: B018 - displayed in a notebook

# %% [markdown]
# ## 2. Trace
# A non-sequential trace splits every ray at every face; the budget closes to the source power.

# %%
result = tracer.trace(scene, rays=20, seed=1, progress=False)
analysis = analyse(result)
print(analysis.budget.format_text())
assert analysis.budget.relative_residual < 1e-12

# %% [markdown]
# ## 3. Ghosts
# The ghost table of the screen: the direct beam (the design path, rank 1) and the ghosts,
# strongest first, each with its power relative to the design path.

# %%
table = analysis.ghosts["screen"]
print(table.format_text(limit=3))
first_ghost = table.strongest_ghost
print("first ghost / design:", f"{first_ghost.ratio:.3g}")
analysis  # noqa: B018 - budget, ghost tables, verdicts and the ray diagram in a notebook

# %% [markdown]
# ## 4. Sweep
# Vary the plate thickness; each point is a full trace. At normal incidence the ghost ratio
# does not depend on the thickness (the ghost lands on the same pixels).

# %%
from tracer.sweep import list_axis, sweep  # noqa: E402

swept = sweep(scene, [list_axis("solids.plate.thickness", ["3 mm", "5 mm", "8 mm"])],
              settings=dict(rays=5), progress=False)
for point, row in zip(swept.points, swept.rows):
    print(point, f"fraction on screen {row['fraction.screen']:.4f}")

# %% [markdown]
# ## 5. Diff
# Put the scene in a git repository, commit it, change it the way a pull request would
# (a glass of higher index, an edited comment, a value rewritten in other units) and ask
# for the difference by meaning and by result. `tracer diff` on the command line does the
# same and exits with 1 when a requirement verdict got worse.

# %%
repo = work / "repo"
(repo / "scenes").mkdir(parents=True)
shutil.copy(SCENES / "plate_ghost.toml", repo / "scenes" / "plate.toml")
env = dict(os.environ, GIT_AUTHOR_NAME="tutorial", GIT_AUTHOR_EMAIL="tutorial@example.invalid",
           GIT_COMMITTER_NAME="tutorial", GIT_COMMITTER_EMAIL="tutorial@example.invalid")


def git(*args):
    subprocess.run(["git", *args], cwd=repo, env=env, check=True, capture_output=True)


git("init", "-q")
git("add", "-A")
git("commit", "-q", "-m", "plate scene")

plate = repo / "scenes" / "plate.toml"
text = plate.read_text(encoding="utf-8")
text = text.replace('thickness = "5 mm"', 'thickness = "0.5 cm"')      # same value, other unit
text = text.replace("# Uncoated plane-parallel", "# Reviewed. Uncoated plane-parallel")
text = text.replace("glass:517642", "glass:720290")                    # a denser flint
plate.write_text(text, encoding="utf-8")

from tracer.versions.compare import diff  # noqa: E402

d = diff("HEAD:scenes/plate.toml", str(plate), cwd=repo, rays=10)
print(d.format_text())
assert [c.key for c in d.scene.changes] == ["solids.plate.material"]
assert d.worse  # the direct-power requirement no longer passes

# %%
(work / "diff.html").write_text(d.html(), encoding="utf-8")
print("wrote", work / "diff.html")
d  # noqa: B018 - the diff tables and the overlaid ray diagrams in a notebook
