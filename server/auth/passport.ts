import passport from 'passport';
import { Strategy as LocalStrategy } from 'passport-local';
import type { AuthService } from './service.js';

/** A passport instance of our own (not the global singleton), so each createApp is independent. */
export function createPassport(auth: AuthService): passport.PassportStatic {
  const pp = new passport.Passport() as unknown as passport.PassportStatic;
  pp.use(
    new LocalStrategy({ usernameField: 'email', passwordField: 'password', session: true }, (email, password, done) => {
      auth.authenticate(email, password).then((u) => done(null, u ?? false), done);
    }),
  );
  pp.serializeUser((user, done) => done(null, (user as Express.User).id));
  pp.deserializeUser((id: number, done) => {
    auth.findActive(id).then((u) => done(null, u ?? false), done);
  });
  return pp;
}
