import { useState, type FormEvent } from 'react';
import { Notice } from '../../../components/ui/primitives';
import { ApiError } from '../../../lib/apiClient';
import { useRequestPasswordReset } from '../api/requestPasswordReset';
import { AuthField, AuthFrame, AuthSubmit, BackToSignIn } from '../components/AuthFrame';

const fieldError = (e: unknown, field: string) =>
  e instanceof ApiError ? ((e.details as { fields?: { field: string; message: string }[] } | undefined)?.fields?.find((f) => f.field === field)?.message ?? null) : null;

export function ResetRequestPage() {
  const ask = useRequestPasswordReset();
  const [email, setEmail] = useState('');
  const submit = (e: FormEvent) => {
    e.preventDefault();
    ask.mutate({ email: email.trim() });
  };
  return (
    <AuthFrame>
      <h1 className="text-lg font-semibold text-night">Forgot your password?</h1>
      {ask.isSuccess ? (
        <>
          <Notice tone="ok">{ask.data.message}</Notice>
          <p className="text-sm text-muted">Nothing arrived? Check the address and ask again in a few minutes.</p>
        </>
      ) : (
        <form onSubmit={submit} className="space-y-4">
          <p className="text-sm text-muted">Give the e-mail address of your account and Starveil will send a link to choose a new password.</p>
          {ask.error && !fieldError(ask.error, 'email') && <Notice tone="bad">{ask.error.message}</Notice>}
          <AuthField label="E-mail" error={fieldError(ask.error, 'email')} name="email" type="email" autoComplete="username" required value={email} onValue={setEmail} />
          <AuthSubmit pending={ask.isPending} busy="Sending…">
            Send the link
          </AuthSubmit>
        </form>
      )}
      <BackToSignIn />
    </AuthFrame>
  );
}
