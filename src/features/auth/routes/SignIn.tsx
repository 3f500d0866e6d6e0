import { useState, type FormEvent } from 'react';
import { Link, Navigate, useLocation, useNavigate } from 'react-router-dom';
import { Notice } from '../../../components/ui/primitives';
import { useLogin } from '../api/login';
import { AUTH_CARD, AuthField, AuthFrame, AuthSubmit } from '../components/AuthFrame';
import { useMe } from '../../../lib/api/me';

export function SignInPage() {
  const me = useMe();
  const login = useLogin();
  const navigate = useNavigate();
  const location = useLocation();
  const [email, setEmail] = useState('');
  const [password, setPassword] = useState('');
  const from = (location.state as { from?: string } | null)?.from ?? '/';

  if (me.data) return <Navigate to={from} replace />;

  const submit = (e: FormEvent) => {
    e.preventDefault();
    login.mutate({ email, password }, { onSuccess: () => navigate(from, { replace: true }) });
  };

  return (
    <AuthFrame bare>
      <form onSubmit={submit} className={AUTH_CARD} aria-label="Sign in">
        <h1 className="text-lg font-semibold text-night">Sign in</h1>
        {login.error && <Notice tone="bad">{login.error.message}</Notice>}
        <AuthField label="E-mail" name="email" type="email" autoComplete="username" required value={email} onValue={setEmail} />
        <AuthField label="Password" name="password" type="password" autoComplete="current-password" required value={password} onValue={setPassword} />
        <AuthSubmit pending={login.isPending} busy="Signing in…">
          Sign in
        </AuthSubmit>
        <p className="text-center text-sm">
          <Link className="text-veil underline underline-offset-2" to="/forgot-password">Forgot your password?</Link>
        </p>
      </form>
    </AuthFrame>
  );
}
