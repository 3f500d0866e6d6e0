import { useState, type FormEvent } from 'react';
import { Button, Card, Field, Notice, PageTitle, Select, TextInput } from '../../../components/ui/primitives';
import type { Role } from '../../../lib/roles';
import { useMe } from '../../../lib/api/me';
import { useCreateUser } from '../api/createUser';
import { useUpdateUser } from '../api/updateUser';
import { useUsers } from '../api/users';

const ROLES: Role[] = ['observer', 'curator', 'modeler', 'admin'];

export function PeoplePage() {
  const users = useUsers();
  const update = useUpdateUser();
  const { data: me } = useMe();
  return (
    <div className="space-y-6">
      <PageTitle sub="Accounts, their roles, and who may sign in.">People</PageTitle>
      {update.error && <Notice tone="bad">{update.error.message}</Notice>}
      <Card title="Accounts">
        {users.isPending && <p className="text-sm text-muted">Loading…</p>}
        {users.error && <Notice tone="bad">{users.error.message}</Notice>}
        {users.data && (
          <table className="w-full text-left text-sm">
            <thead className="border-b border-line text-xs uppercase tracking-wide text-muted">
              <tr><th className="py-2">Name</th><th>E-mail</th><th>Role</th><th>Last sign-in</th><th>Access</th></tr>
            </thead>
            <tbody>
              {users.data.users.map((u) => (
                <tr key={u.id} className="border-b border-line/60">
                  <td className="py-2 font-medium text-night">{u.name}</td>
                  <td>{u.email}</td>
                  <td>
                    <Select aria-label={`Role of ${u.email}`} value={u.role} disabled={u.id === me?.id} onChange={(e) => update.mutate({ id: u.id, role: e.target.value as Role })}>
                      {ROLES.map((r) => <option key={r} value={r}>{r}</option>)}
                    </Select>
                  </td>
                  <td className="text-muted">{u.lastSignInAt ? new Date(u.lastSignInAt).toLocaleString() : '—'}</td>
                  <td>
                    <Button tone={u.disabled ? 'quiet' : 'danger'} disabled={u.id === me?.id} onClick={() => update.mutate({ id: u.id, disabled: !u.disabled })}>
                      {u.disabled ? 'Enable' : 'Disable'}
                    </Button>
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </Card>
      <NewAccount />
    </div>
  );
}

function NewAccount() {
  const create = useCreateUser();
  const [form, setForm] = useState({ email: '', name: '', role: 'observer' as Role, password: '' });
  const submit = (e: FormEvent) => {
    e.preventDefault();
    create.mutate(form, { onSuccess: () => setForm({ email: '', name: '', role: 'observer', password: '' }) });
  };
  return (
    <Card title="New account">
      <form onSubmit={submit} className="grid gap-4 md:grid-cols-5 md:items-end">
        <Field label="Name"><TextInput required value={form.name} onChange={(e) => setForm({ ...form, name: e.target.value })} /></Field>
        <Field label="E-mail"><TextInput required type="email" value={form.email} onChange={(e) => setForm({ ...form, email: e.target.value })} /></Field>
        <Field label="Role">
          <Select value={form.role} onChange={(e) => setForm({ ...form, role: e.target.value as Role })} className="w-full">
            {ROLES.map((r) => <option key={r} value={r}>{r}</option>)}
          </Select>
        </Field>
        <Field label="First password" hint="At least 10 characters"><TextInput required minLength={10} type="password" value={form.password} onChange={(e) => setForm({ ...form, password: e.target.value })} /></Field>
        <Button type="submit" disabled={create.isPending}>Create account</Button>
      </form>
      <div className="mt-3">
        {create.error && <Notice tone="bad">{create.error.message}</Notice>}
        {create.isSuccess && <Notice tone="ok">Account {create.data.email} created.</Notice>}
      </div>
    </Card>
  );
}
