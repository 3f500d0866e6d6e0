import { useState, type FormEvent } from 'react';
import { Link, useSearchParams } from 'react-router-dom';
import { Notice } from '../../../components/ui/primitives';
import { ApiError } from '../../../lib/apiClient';
import { useConfirmPasswordReset } from '../api/confirmPasswordReset';
import { AuthField, AuthFrame, AuthSubmit, BackToSignIn } from '../components/AuthFrame';

export function ResetConfirmPage() {
  const [params] = useSearchParams();
  const token = params.get('token') ?? '';
  const reset = useConfirmPasswordReset();
  const [password, setPassword] = useState('');
  const [repeat, setRepeat] = useState('');
  const [localError, setLocalError] = useState<string | null>(null);

  const submit = (e: FormEvent) => {
    e.preventDefault();
    if (password.length < 10) return setLocalError('The new password needs at least 10 characters.');
    if (password !== repeat) return setLocalError('The two passwords are not the same.');
    setLocalError(null);
    reset.mutate({ token, newPassword: password });
  };

  const tokenRefused = reset.error instanceof ApiError && reset.error.code.startsWith('reset_token');

  return (
    <AuthFrame>
      <h1 className="text-lg font-semibold text-night">Choose a new password</h1>
      {!token ? (
        <Notice tone="bad">
          This page needs the link from the password-reset e-mail. <Link className="underline" to="/forgot-password">Ask for a link</Link>.
        </Notice>
      ) : reset.isSuccess ? (
        <>
          <Notice tone="ok">Your password has been changed, and every session of your account has been signed out.</Notice>
          <Link to="/sign-in" className="block rounded-md bg-night px-3.5 py-2 text-center text-sm font-medium text-white hover:bg-night-2">
            Sign in with the new password
          </Link>
        </>
      ) : (
        <form onSubmit={submit} className="space-y-4">
          {reset.error && (
            <Notice tone="bad">
              {reset.error.message}
              {tokenRefused && (
                <>
                  {' '}
                  <Link className="underline" to="/forgot-password">Send me a new link</Link>.
                </>
              )}
            </Notice>
          )}
          <AuthField label="New password" hint="At least 10 characters, not the demo password" error={localError} name="newPassword" type="password" autoComplete="new-password" required minLength={10} value={password} onValue={setPassword} />
          <AuthField label="The same again" name="repeatPassword" type="password" autoComplete="new-password" required value={repeat} onValue={setRepeat} />
          <AuthSubmit pending={reset.isPending} busy="Saving…">
            Set the new password
          </AuthSubmit>
        </form>
      )}
      <BackToSignIn />
    </AuthFrame>
  );
}
