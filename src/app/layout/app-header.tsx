import { Link, NavLink, useMatch, useNavigate } from 'react-router';
import { Button } from '../../components/button';
import { LogoMark } from '../../components/logo-mark';
import { useRigsIfLoaded } from '../../features/rigs/api/get-rigs';
import { useSession } from '../../lib/session';
import { useSignOut } from '../../features/session/api/sign-out';
import { ErrorNotice } from '../../components/notice';

/** `wide`: the page below uses the window's width, so the header lines up with it. */
export function AppHeader({ wide = false }: { wide?: boolean }) {
  const session = useSession();
  const rigs = useRigsIfLoaded(Boolean(session.user));
  const signOut = useSignOut();
  const navigate = useNavigate();
  const rigMatch = useMatch('/rigs/:rigId/*');
  const currentRigId = rigMatch ? Number(rigMatch.params.rigId) : null;
  const currentRig = rigs.data?.find((r) => r.id === currentRigId);

  return (
    <header className="border-b border-ink-800 bg-ink-900 text-ink-100">
      <div className={`mx-auto flex h-14 items-center gap-4 px-4 ${wide ? 'max-w-[120rem]' : 'max-w-6xl'}`}>
        <Link to="/" className="flex items-center gap-2 font-semibold tracking-tight text-white">
          <LogoMark className="h-7 w-7" />
          <span>Flagline</span>
        </Link>
        <nav aria-label="Breadcrumb" className="flex min-w-0 items-center gap-2 text-sm">
          <span className="text-ink-500">/</span>
          <NavLink to="/" end className={({ isActive }) => (isActive ? 'text-white' : 'text-ink-300 hover:text-white')}>
            Rigs
          </NavLink>
          {currentRig ? (
            <>
              <span className="text-ink-500">/</span>
              {rigs.data && rigs.data.length > 1 ? (
                <select
                  aria-label="Switch rig"
                  value={currentRig.id}
                  onChange={(e) => navigate(`/rigs/${e.target.value}`)}
                  className="max-w-56 truncate rounded border border-ink-700 bg-ink-800 px-1.5 py-0.5 text-sm text-white"
                >
                  {rigs.data.map((rig) => (
                    <option key={rig.id} value={rig.id}>
                      {rig.name}
                    </option>
                  ))}
                </select>
              ) : (
                <span className="truncate text-white">{currentRig.name}</span>
              )}
            </>
          ) : null}
        </nav>
        <div className="ml-auto flex items-center gap-3 text-sm">
          {session.devMailbox && session.user ? (
            <NavLink
              to="/dev/mailbox"
              className={({ isActive }) =>
                `rounded px-2 py-1 font-mono text-xs ${isActive ? 'bg-flare-500 text-ink-950' : 'text-flare-300 hover:bg-ink-800'}`
              }
            >
              Dev mailbox
            </NavLink>
          ) : null}
          {session.user ? (
            <span className="hidden text-ink-300 sm:inline" title={session.user.email}>
              Signed in as <span className="text-white">{session.user.name}</span>
            </span>
          ) : null}
          <Button
            variant="inverse"
            className="py-1"
            busy={signOut.isPending}
            onClick={() => signOut.mutate(undefined, { onSuccess: () => navigate('/sign-in', { replace: true }) })}
          >
            Sign out
          </Button>
        </div>
      </div>
      {signOut.error ? (
        <div className="mx-auto max-w-6xl px-4 pb-2">
          <ErrorNotice error={signOut.error} />
        </div>
      ) : null}
    </header>
  );
}
