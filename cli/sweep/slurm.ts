/**
 * The Slurm job array of a sharded sweep: one array task per shard and a
 * merge job that runs once every task has succeeded. Every value that comes
 * from the user (paths, --set and --vary values) is single-quoted for the
 * shell and sits in a quoted here-document, so nothing in it is expanded or
 * run when the script is submitted or when a job starts.
 *
 * @module
 */

/** A shell word that the shell takes literally: '…' with each ' written as '\''. */
export function shellQuote(s: string): string {
  return `'${s.replace(/'/g, `'\\''`)}'`;
}

/** Text for a comment line: control characters (a newline would end the comment) shown as "?". */
function commentText(s: string): string {
  // deno-lint-ignore no-control-regex
  return s.replace(/[\u0000-\u001f\u007f]/g, "?");
}

/**
 * The text of a Slurm job-array script that runs one shard per array task and a dependent job that merges
 * them.
 *
 * @param script the script's own path (named in its comments)
 * @param caseFile the case file (as the cluster will see it)
 * @param out the sweep folder
 * @param shards how many shards (array tasks)
 * @param extra further flags for every shard (e.g. --vary)
 * @returns the script
 */
export function arrayScript(
  script: string,
  caseFile: string,
  out: string,
  shards: number,
  extra: string[],
): string {
  const flags = extra.map(shellQuote).join(" ");
  const shard = `${shellQuote(caseFile)} --out ${shellQuote(out)} --shard "$SLURM_ARRAY_TASK_ID/${shards}"`;
  return `#!/usr/bin/env bash
# Submit with:  bash ${commentText(script)}
# It submits a Slurm job array of ${shards} tasks, each running one shard of the
# sweep into ${commentText(out)}, and a job that merges the shards once every task succeeded.
# Adjust the resources below to your cluster. ORDO is the command that runs ordo on the
# nodes (default: ordo, installed with \`deno task install\` from a checkout); the jobs inherit it.
set -euo pipefail
export ORDO="\${ORDO:-ordo}"

array_id=$(sbatch --parsable --array=1-${shards} --job-name=ordo-sweep --cpus-per-task=1 --time=02:00:00 <<'EOF'
#!/usr/bin/env bash
set -euo pipefail
$ORDO sweep ${shard} --workers 1 --resume --quiet ${flags}
EOF
)

sbatch --dependency=afterok:"\${array_id}" --job-name=ordo-merge --time=00:30:00 <<'EOF'
#!/usr/bin/env bash
set -euo pipefail
$ORDO sweep --merge ${shellQuote(out)}
EOF
echo "submitted array \${array_id} (${shards} shards) and its merge job"
`;
}
