import type { InputHTMLAttributes, ReactNode } from 'react';
import { Link } from 'react-router-dom';
import { Logo } from '../../../components/ui/Logo';
import { Button, Field, TextInput } from '../../../components/ui/primitives';

/** The card's look, for a page whose card is itself a form (`bare`). */
export const AUTH_CARD = 'space-y-4 rounded-xl bg-card p-6 shadow-xl';

/** The night-sky frame around the signed-out pages: logo above a single card (or, `bare`, the page's own card). */
export function AuthFrame({ children, bare = false }: { children: ReactNode; bare?: boolean }) {
  return (
    <div className="grid min-h-screen place-items-center bg-night px-4">
      <div className="w-full max-w-sm">
        <div className="mb-6 flex items-center gap-3 text-white">
          <Logo size={44} />
          <div>
            <div className="text-xl font-semibold tracking-tight">Starveil</div>
            <div className="text-xs text-veil-soft/80">Starlight polarization, layer by layer</div>
          </div>
        </div>
        {bare ? children : <div className={AUTH_CARD}>{children}</div>}
      </div>
    </div>
  );
}

/** The way back from the password-reset pages. */
export function BackToSignIn() {
  return (
    <p className="text-center text-sm">
      <Link className="text-veil underline underline-offset-2" to="/sign-in">Back to sign-in</Link>
    </p>
  );
}

/** A labelled text field of a signed-out form, bound to one piece of string state. */
export function AuthField({ label, hint, error, onValue, ...input }: Omit<InputHTMLAttributes<HTMLInputElement>, 'onChange'> & { label: string; hint?: string; error?: string | null; value: string; onValue: (value: string) => void }) {
  return (
    <Field label={label} hint={hint} error={error}>
      <TextInput {...input} onChange={(e) => onValue(e.target.value)} />
    </Field>
  );
}

/** The form's full-width submit button; it says what it is doing (`busy`) while the request runs. */
export function AuthSubmit({ pending, busy, children }: { pending: boolean; busy: string; children: ReactNode }) {
  return (
    <Button type="submit" className="w-full justify-center" disabled={pending}>
      {pending ? busy : children}
    </Button>
  );
}
