import type { Role } from '../../shared/schemas';

const styles: Record<Role, string> = {
  owner: 'bg-flare-100 text-flare-700 dark:bg-flare-500/15 dark:text-flare-300',
  analyst: 'bg-tide-100 text-tide-700 dark:bg-tide-500/15 dark:text-tide-300',
  viewer: 'bg-raised text-muted',
};

export function RoleBadge({ role }: { role: Role }) {
  return <span className={`inline-block rounded px-1.5 py-0.5 font-mono text-xs font-medium ${styles[role]}`}>{role}</span>;
}
