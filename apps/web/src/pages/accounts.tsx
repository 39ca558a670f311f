import { useState } from 'preact/hooks';
import { useData, type PageProps } from '../app';
import {
  ApiError,
  del,
  patch,
  post,
  put,
  type DeskList,
  type MemberList,
  type MemberRole,
  type NewUser,
  type Role,
  type User,
  type UserList,
} from '../api';
import { TableBox } from '../components/table-box';
import { when } from '../format';

const ACCOUNT_ROLES: Role[] = ['reviewer', 'supervisor', 'auditor', 'admin'];
const MEMBER_ROLES: MemberRole[] = ['reviewer', 'supervisor', 'auditor'];

const messageOf = (e: unknown) => (e instanceof ApiError ? e.message : String(e));

/**
 * The admin's screen: accounts (create, disable or enable, reset a password, change the account role) and desk
 * members (add with a role, change the role, remove). Every action is an ordinary API call, refused or allowed by
 * the server's rules (the last admin, the last supervisor of a desk, the password policy), whose message is shown.
 */
export function AccountsPage({ me }: PageProps) {
  const [users, usersError, reloadUsers] = useData<UserList>('/users');
  const [desks] = useData<DeskList>('/desks');
  const [status, setStatus] = useState<{ ok: boolean; text: string } | null>(null);

  const act = async (what: () => Promise<unknown>, done: string): Promise<boolean> => {
    try {
      await what();
      setStatus({ ok: true, text: done });
      reloadUsers();
      return true;
    } catch (e) {
      setStatus({ ok: false, text: messageOf(e) });
      return false;
    }
  };

  return (
    <section class="page accounts">
      <div class="page-head">
        <h1>Accounts</h1>
      </div>
      <p class="lead">
        Accounts and who works on which desk. The account role decides who may create desks (supervisor) and manage
        accounts (admin); on a desk, only the role given there counts. Disabling an account or setting a new password
        ends all its sessions and tokens at once.
      </p>
      {status && (
        <p class={status.ok ? 'notice' : 'error'} role={status.ok ? 'status' : 'alert'}>
          {status.text}
        </p>
      )}
      {usersError && (
        <p class="error" role="alert">
          {usersError}
        </p>
      )}
      <NewAccount
        onDone={(text) => setStatus({ ok: true, text })}
        onError={(text) => setStatus({ ok: false, text })}
        reload={reloadUsers}
      />
      {users && (
        <TableBox label="Accounts">
          <table class="accounts-table">
            <thead>
              <tr>
                <th scope="col">Name</th>
                <th scope="col">Account role</th>
                <th scope="col">State</th>
                <th scope="col">Created</th>
                <th scope="col">Actions</th>
              </tr>
            </thead>
            <tbody>
              {users.users.map((u) => (
                <AccountRow key={u.id} user={u} self={u.id === me.id} act={act} />
              ))}
            </tbody>
          </table>
        </TableBox>
      )}
      {users && desks && <Memberships users={users.users} desks={desks} act={act} />}
    </section>
  );
}

function NewAccount({
  onDone,
  onError,
  reload,
}: {
  onDone: (text: string) => void;
  onError: (text: string) => void;
  reload: () => void;
}) {
  const [name, setName] = useState('');
  const [role, setRole] = useState<Role>('reviewer');
  const [password, setPassword] = useState('');
  const [token, setToken] = useState<{ name: string; token: string } | null>(null);
  const submit = async (e: Event) => {
    e.preventDefault();
    try {
      const made = await post<NewUser>('/users', { name, role, ...(password ? { password } : {}) });
      setToken({ name: made.name, token: made.token });
      onDone(`Account ${made.name} created (${made.role}).`);
      setName('');
      setPassword('');
      reload();
    } catch (err) {
      onError(messageOf(err));
    }
  };
  return (
    <form class="new-account" aria-label="New account" onSubmit={(e) => void submit(e)}>
      <h2>New account</h2>
      <div class="form-row">
        <label>
          Name
          <input required value={name} autoComplete="off" onInput={(e) => setName(e.currentTarget.value)} />
        </label>
        <label>
          Account role
          <select value={role} onChange={(e) => setRole(e.currentTarget.value as Role)}>
            {ACCOUNT_ROLES.map((r) => (
              <option value={r}>{r}</option>
            ))}
          </select>
        </label>
        <label>
          Password (optional)
          <input
            type="password"
            autoComplete="new-password"
            minLength={8}
            value={password}
            onInput={(e) => setPassword(e.currentTarget.value)}
          />
        </label>
        <button type="submit" class="primary">
          Create account
        </button>
      </div>
      <p class="muted">
        Without a password the account signs in with its API token only. Passwords need 8 characters or more and must
        not be a common one.
      </p>
      {token && (
        <p class="notice new-token">
          API token of {token.name}, shown only this once: <code>{token.token}</code>
        </p>
      )}
    </form>
  );
}

function AccountRow({
  user,
  self,
  act,
}: {
  user: User;
  self: boolean;
  act: (what: () => Promise<unknown>, done: string) => Promise<boolean>;
}) {
  const [resetting, setResetting] = useState(false);
  const [password, setPassword] = useState('');
  const path = `/users/${user.id}`;
  return (
    <tr data-user={user.name}>
      <th scope="row">
        {user.name}
        {self && <span class="muted"> (you)</span>}
      </th>
      <td>
        <select
          aria-label={`Account role of ${user.name}`}
          value={user.role}
          onChange={(e) => {
            const role = e.currentTarget.value as Role;
            void act(() => patch(path, { role }), `${user.name} is now ${role}.`);
          }}
        >
          {ACCOUNT_ROLES.map((r) => (
            <option value={r}>{r}</option>
          ))}
        </select>
      </td>
      <td>{user.disabled ? 'disabled' : 'active'}</td>
      <td>{when(user.createdAt)}</td>
      <td class="row-actions">
        <button
          type="button"
          onClick={() =>
            void act(
              () => patch(path, { disabled: !user.disabled }),
              user.disabled ? `${user.name} is enabled.` : `${user.name} is disabled; its sessions and tokens ended.`,
            )
          }
        >
          {user.disabled ? `Enable ${user.name}` : `Disable ${user.name}`}
        </button>
        {!resetting && (
          <button type="button" onClick={() => setResetting(true)}>
            Reset password of {user.name}
          </button>
        )}
        {resetting && (
          <form
            class="reset-password"
            onSubmit={(e) => {
              e.preventDefault();
              void act(
                () => patch(path, { password }),
                `New password set for ${user.name}; its sessions and tokens ended.`,
              ).then((ok) => {
                if (ok) {
                  setResetting(false);
                  setPassword('');
                }
              });
            }}
          >
            <label>
              New password for {user.name}
              <input
                type="password"
                required
                minLength={8}
                autoComplete="new-password"
                value={password}
                onInput={(e) => setPassword(e.currentTarget.value)}
              />
            </label>
            <button type="submit" class="primary">
              Set password
            </button>
            <button type="button" class="quiet" onClick={() => setResetting(false)}>
              Cancel
            </button>
          </form>
        )}
      </td>
    </tr>
  );
}

function Memberships({
  users,
  desks,
  act,
}: {
  users: User[];
  desks: DeskList;
  act: (what: () => Promise<unknown>, done: string) => Promise<boolean>;
}) {
  const [deskId, setDeskId] = useState<number | null>(desks.desks[0]?.id ?? null);
  const [members, membersError, reloadMembers] = useData<MemberList>(
    deskId === null ? null : `/desks/${deskId}/members`,
  );
  const [userId, setUserId] = useState('');
  const [role, setRole] = useState<MemberRole>('reviewer');
  const desk = desks.desks.find((d) => d.id === deskId);
  const change = async (what: () => Promise<unknown>, done: string) => {
    if (await act(what, done)) reloadMembers();
  };
  if (desks.desks.length === 0) return <p class="empty">There is no desk yet: a supervisor creates desks.</p>;
  const outside = users.filter((u) => !members?.members.some((m) => m.userId === u.id));
  return (
    <section class="memberships" aria-label="Desk members">
      <h2>Desk members</h2>
      <label>
        Desk to manage
        <select value={String(deskId)} onChange={(e) => setDeskId(Number(e.currentTarget.value))}>
          {desks.desks.map((d) => (
            <option value={String(d.id)}>{d.name}</option>
          ))}
        </select>
      </label>
      {membersError && (
        <p class="error" role="alert">
          {membersError}
        </p>
      )}
      {members && desk && (
        <TableBox label={`Members of ${desk.name}`}>
          <table class="members-table">
            <thead>
              <tr>
                <th scope="col">Member</th>
                <th scope="col">Role on {desk.name}</th>
                <th scope="col">Since</th>
                <th scope="col">Actions</th>
              </tr>
            </thead>
            <tbody>
              {members.members.map((m) => (
                <tr data-member={m.name}>
                  <th scope="row">
                    {m.name}
                    {m.disabled && <span class="muted"> (disabled)</span>}
                  </th>
                  <td>
                    <select
                      aria-label={`Role of ${m.name} on ${desk.name}`}
                      value={m.role}
                      onChange={(e) => {
                        const r = e.currentTarget.value as MemberRole;
                        void change(
                          () => put(`/desks/${desk.id}/members/${m.userId}`, { role: r }),
                          `${m.name} is now ${r} on ${desk.name}.`,
                        );
                      }}
                    >
                      {MEMBER_ROLES.map((r) => (
                        <option value={r}>{r}</option>
                      ))}
                    </select>
                  </td>
                  <td>{when(m.since)}</td>
                  <td>
                    <button
                      type="button"
                      onClick={() =>
                        void change(
                          () => del(`/desks/${desk.id}/members/${m.userId}`),
                          `${m.name} is no longer a member of ${desk.name}.`,
                        )
                      }
                    >
                      Remove {m.name} from {desk.name}
                    </button>
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </TableBox>
      )}
      {members && desk && (
        <form
          class="form-row add-member"
          aria-label={`Add a member to ${desk.name}`}
          onSubmit={(e) => {
            e.preventDefault();
            const u = users.find((x) => String(x.id) === userId);
            if (!u) return;
            void change(
              () => put(`/desks/${desk.id}/members/${u.id}`, { role }),
              `${u.name} is now ${role} on ${desk.name}.`,
            ).then(() => setUserId(''));
          }}
        >
          <label>
            Account
            <select required value={userId} onChange={(e) => setUserId(e.currentTarget.value)}>
              <option value="" disabled>
                choose
              </option>
              {outside.map((u) => (
                <option value={String(u.id)}>{u.name}</option>
              ))}
            </select>
          </label>
          <label>
            Role on {desk.name}
            <select value={role} onChange={(e) => setRole(e.currentTarget.value as MemberRole)}>
              {MEMBER_ROLES.map((r) => (
                <option value={r}>{r}</option>
              ))}
            </select>
          </label>
          <button type="submit" class="primary">
            Add to {desk.name}
          </button>
        </form>
      )}
    </section>
  );
}
