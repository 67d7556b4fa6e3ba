import { paths } from '../../config/paths.js';
import { AuthLayout } from '../../components/layouts/auth-layout.js';
import { TextLink } from '../../components/ui/text-link.js';
import { ForgotPasswordForm } from '../../features/auth/components/forgot-password-form.js';

export function ForgotPasswordRoute() {
  return (
    <AuthLayout
      title="Reset your password"
      description="Enter your e-mail address and we send a single-use link to choose a new password."
      footer={<TextLink to={paths.auth.signIn.href()}>Back to sign in</TextLink>}
    >
      <title>Reset password · Counterpoise</title>
      <ForgotPasswordForm />
    </AuthLayout>
  );
}
