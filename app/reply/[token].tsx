export { ReplyScreen as default } from '../../components/features/reply/reply-screen';
