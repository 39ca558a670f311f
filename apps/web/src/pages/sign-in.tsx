import { useState } from 'preact/hooks';
import { ApiError, post, type Me, type SignedIn } from '../api';
import { Cautions } from '../components/cautions';

export function SignIn({ onSignedIn, signedIn }: { onSignedIn: (me: Me) => void; signedIn: Me | null }) {
  const [name, setName] = useState('');
  const [password, setPassword] = useState('');
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  document.title = 'Sign in · Cribra';

  const submit = async (e: Event) => {
    e.preventDefault();
    setBusy(true);
    setError(null);
    try {
      const { user } = await post<SignedIn>('/auth/login', { name: name.trim(), password });
      onSignedIn(user);
    } catch (err) {
      setError(
        err instanceof ApiError && err.status === 401
          ? 'That name and password do not match an active account.'
          : (err as Error).message,
      );
    } finally {
      setBusy(false);
    }
  };

  return (
    <div class="signin-page">
      <main class="signin" id="main">
        <h1 class="brand-large">Cribra</h1>
        <p class="tagline">
          A review queue that learns from every verdict and says, at a coverage you choose, when the model is sure.
        </p>
        {signedIn && (
          <p class="notice">
            You are signed in as {signedIn.name}. <a href="/">Go to your desks</a> or sign in as someone else.
          </p>
        )}
        <form
          onSubmit={(e) => void submit(e)}
          class="signin-form"
          aria-describedby={error ? 'signin-error' : undefined}
        >
          <label>
            Name
            <input
              name="name"
              autocomplete="username"
              required
              value={name}
              onInput={(e) => setName(e.currentTarget.value)}
              autofocus
            />
          </label>
          <label>
            Password
            <input
              name="password"
              type="password"
              autocomplete="current-password"
              required
              value={password}
              onInput={(e) => setPassword(e.currentTarget.value)}
            />
          </label>
          {error && (
            <p class="error" id="signin-error" role="alert">
              {error}
            </p>
          )}
          <button type="submit" class="primary" disabled={busy}>
            {busy ? 'Signing in…' : 'Sign in'}
          </button>
        </form>
        <Cautions />
      </main>
    </div>
  );
}
