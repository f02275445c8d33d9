export function SignInPage() {
  return (
    <div className="flex h-full items-center justify-center bg-surface">
      <div className="w-80 rounded-md border border-line bg-surface-raised p-6 text-center">
        <p className="text-lg font-semibold tracking-tight">Liftwise</p>
        <p className="mt-1 text-ink-muted">Sign in with your organisation's account.</p>
        <a
          href="/auth/saml/login"
          className="mt-5 block rounded bg-action px-3 py-2 font-medium text-white hover:bg-action-hover focus-visible:outline-offset-2"
        >
          Sign in
        </a>
      </div>
    </div>
  );
}
