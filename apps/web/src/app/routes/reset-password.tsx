import { useSearchParams } from 'react-router-dom';
import { paths } from '../../config/paths.js';
import { AuthLayout } from '../../components/layouts/auth-layout.js';
import { Callout } from '../../components/ui/callout.js';
import { TextLink } from '../../components/ui/text-link.js';
import { tokenLooksUsable } from '../../features/auth/components/new-password-fields.js';
import { ResetPasswordForm } from '../../features/auth/components/reset-password-form.js';

export function ResetPasswordRoute() {
  const [params] = useSearchParams();
  const token = params.get('token');

  return (
    <AuthLayout
      title="Choose a new password"
      footer={<TextLink to={paths.auth.signIn.href()}>Back to sign in</TextLink>}
    >
      <title>Choose a new password · Counterpoise</title>
      {tokenLooksUsable(token) ? (
        <ResetPasswordForm token={token} />
      ) : (
        <div role="alert">
          <Callout tone="danger" title="This link is incomplete">
            <p>Open the link from the e-mail exactly as it was sent, or ask for a new one.</p>
          </Callout>
          <p className="mt-5">
            <TextLink to={paths.auth.forgotPassword.href()}>Send a new reset link</TextLink>
          </p>
        </div>
      )}
    </AuthLayout>
  );
}
