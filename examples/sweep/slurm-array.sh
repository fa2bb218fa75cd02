#!/bin/bash
# A sweep shared by the 3 tasks of a Slurm job array: each task gets its number (1, 2, 3) in
# SLURM_ARRAY_TASK_ID and runs that part of 3. Submit with `sbatch slurm-array.sh` from the folder holding
# grid.json; when every task has finished, run `weft sweep grid.json --merge --folder runs` once.
#SBATCH --job-name=weft-sweep
#SBATCH --array=1-3
#SBATCH --cpus-per-task=2
#SBATCH --time=00:30:00
npx weft sweep grid.json --folder runs --part ${SLURM_ARRAY_TASK_ID}/3 --jobs ${SLURM_CPUS_PER_TASK}
