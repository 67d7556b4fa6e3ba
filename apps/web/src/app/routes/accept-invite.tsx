import { useSearchParams } from 'react-router-dom';
import { paths } from '../../config/paths.js';
import { AuthLayout } from '../../components/layouts/auth-layout.js';
import { Callout } from '../../components/ui/callout.js';
import { TextLink } from '../../components/ui/text-link.js';
import { AcceptInviteForm } from '../../features/auth/components/accept-invite-form.js';
import { tokenLooksUsable } from '../../features/auth/components/new-password-fields.js';

export function AcceptInviteRoute() {
  const [params] = useSearchParams();
  const token = params.get('token');

  return (
    <AuthLayout
      title="Set up your account"
      description="You were invited to Counterpoise. Choose your name and a password."
      footer={
        <p>
          Already set up? <TextLink to={paths.auth.signIn.href()}>Sign in</TextLink>
        </p>
      }
    >
      <title>Accept invitation · Counterpoise</title>
      {tokenLooksUsable(token) ? (
        <AcceptInviteForm token={token} />
      ) : (
        <div role="alert">
          <Callout tone="danger" title="This invitation link is incomplete">
            <p>Open the link from the invitation e-mail exactly as it was sent.</p>
          </Callout>
        </div>
      )}
    </AuthLayout>
  );
}
