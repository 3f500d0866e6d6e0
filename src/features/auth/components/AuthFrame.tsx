import type { ReactNode } from 'react';
import { Logo } from '../../../components/ui/Logo';

/** The night-sky frame around the signed-out pages: logo above a single card. */
export function AuthFrame({ children }: { children: ReactNode }) {
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
        <div className="space-y-4 rounded-xl bg-card p-6 shadow-xl">
          {children}
        </div>
      </div>
    </div>
  );
}
