import { useState, type FormEvent } from 'react';
import { Button, Card, Field, Notice, PageTitle, TextInput } from '../../../components/ui/primitives';
import { useMe } from '../../../lib/api/me';
import { useChangePassword } from '../api/changePassword';

export function AccountPage() {
  const { data: me } = useMe();
  const change = useChangePassword();
  const [current, setCurrent] = useState('');
  const [next, setNext] = useState('');
  const submit = (e: FormEvent) => {
    e.preventDefault();
    change.mutate({ currentPassword: current, newPassword: next }, { onSuccess: () => { setCurrent(''); setNext(''); } });
  };
  return (
    <div className="max-w-xl space-y-6">
      <PageTitle sub={me ? `${me.name} · ${me.email} · ${me.role}` : undefined}>Account</PageTitle>
      <Card title="Change password">
        <form onSubmit={submit} className="space-y-4">
          <Field label="Current password"><TextInput type="password" autoComplete="current-password" required value={current} onChange={(e) => setCurrent(e.target.value)} /></Field>
          <Field label="New password" hint="At least 10 characters, not the demo password"><TextInput type="password" autoComplete="new-password" minLength={10} required value={next} onChange={(e) => setNext(e.target.value)} /></Field>
          {change.error && <Notice tone="bad">{change.error.message}</Notice>}
          {change.isSuccess && <Notice tone="ok">Password changed.</Notice>}
          <Button type="submit" disabled={change.isPending}>Change password</Button>
        </form>
      </Card>
    </div>
  );
}
