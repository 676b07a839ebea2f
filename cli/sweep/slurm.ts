/**
 * The Slurm job array of a sharded sweep: one array task per shard and a
 * merge job that runs once every task has succeeded.
 *
 * @module
 */

/**
 * Writes a Slurm job-array script that runs one shard per array task and a
 * dependent job that merges them.
 *
 * @param script the path to write
 * @param caseFile the case file (as the cluster will see it)
 * @param out the sweep folder
 * @param shards how many shards (array tasks)
 * @param extra further flags for every shard (e.g. --vary)
 */
export function emitArrayScript(
  script: string,
  caseFile: string,
  out: string,
  shards: number,
  extra: string[],
): void {
  const q = (s: string) => `'${s.replace(/'/g, `'\\''`)}'`;
  const flags = extra.map(q).join(" ");
  const text = `#!/usr/bin/env bash
# Submit with:  bash ${script}
# It submits a Slurm job array of ${shards} tasks, each running one shard of the
# sweep into ${out}, and a job that merges the shards once every task succeeded.
# Adjust the resources below to your cluster; ORDO may be set to the ordo command
# (default: deno task ordo, run from this repository).
set -euo pipefail
ORDO=\${ORDO:-"deno task --quiet ordo"}
CASE=${q(caseFile)}
OUT=${q(out)}

array_id=$(sbatch --parsable --array=1-${shards} --job-name=ordo-sweep --cpus-per-task=1 --time=02:00:00 <<EOF
#!/usr/bin/env bash
set -euo pipefail
\$ORDO sweep "\$CASE" --out "\$OUT" --shard "\\$SLURM_ARRAY_TASK_ID/${shards}" --workers 1 --resume --quiet ${flags}
EOF
)

sbatch --dependency=afterok:"\${array_id}" --job-name=ordo-merge --time=00:30:00 <<EOF
#!/usr/bin/env bash
set -euo pipefail
\$ORDO sweep --merge "\$OUT"
EOF
echo "submitted array \${array_id} (${shards} shards) and its merge job"
`;
  Deno.writeTextFileSync(script, text);
  Deno.chmodSync(script, 0o755);
}
